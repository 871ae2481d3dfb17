/**
 * zod schema of a knowledge production function model spec as it crosses a boundary (a JSON file
 * given to `ideafront fit --spec FILE.json`, a request body), and the named specs as data.
 *
 * The schema validates the SHAPE (field names, types, enumerations; unknown fields refused); the
 * builder `kpfSpec` of lib/estimation then fills defaults and checks ranges and combinations. A
 * file may start from a named spec: `{ "base": "reference", "bootstrap": { "draws": 199 } }`.
 */
import { z } from "zod";
import {
  type KpfSpec,
  type KpfSpecInput,
  NAMED_KPF_SPECS,
  REFERENCE_PANEL_SPEC,
  REFERENCE_SPEC,
  TEAM_DEFAULT_SPEC,
  deriveKpfSpec,
  kpfSpec,
} from "../estimation/kpf-spec";

export { NAMED_KPF_SPECS, REFERENCE_PANEL_SPEC, REFERENCE_SPEC, TEAM_DEFAULT_SPEC };

const range = z.tuple([z.number(), z.number()]);

const smoothing = z.union([
  z.strictObject({ kind: z.literal("annual") }),
  z.strictObject({ kind: z.literal("average"), years: z.number().int(), overlapping: z.boolean().optional() }),
  z.strictObject({ kind: z.literal("trend"), method: z.literal("rolling-log-linear").optional(), years: z.number().int().optional() }),
  z.strictObject({ kind: z.literal("trend"), method: z.literal("hp"), lambda: z.number().optional() }),
]);

const covariance = z.discriminatedUnion("kind", [
  z.strictObject({ kind: z.literal("classical") }),
  z.strictObject({ kind: z.literal("HC"), type: z.enum(["HC0", "HC1", "HC3"]).optional() }),
  z.strictObject({ kind: z.literal("cluster") }),
  z.strictObject({ kind: z.literal("HAC"), lags: z.union([z.literal("auto"), z.number().int()]).optional(), adjust: z.boolean().optional() }),
]);

const researchGrowth = z.discriminatedUnion("kind", [
  z.strictObject({
    kind: z.literal("window"),
    source: z.enum(["researchers", "population"]).optional(),
    window: z.number().int().optional(),
    method: z.enum(["endpoints", "log-trend"]).optional(),
  }),
  z.strictObject({ kind: z.literal("given"), value: z.number() }),
]);

/** Shape of a spec input (all fields optional; defaults are the `reference` spec's), plus an optional base spec name. */
export const kpfSpecInputSchema = z.strictObject({
  base: z.enum(["reference", "reference-panel", "team-default"]).optional(),
  name: z.string().min(1).optional(),
  description: z.string().optional(),
  form: z.enum(["log-linear", "levels-nls", "cointegration", "capital-augmented"]).optional(),
  scope: z.enum(["economy", "panel"]).optional(),
  smoothing: smoothing.optional(),
  nonPositiveGrowth: z.literal("drop").optional(),
  lagYears: z.number().int().optional(),
  leadsLags: z.number().int().optional(),
  restrictions: z.strictObject({ gamma: z.number().nullable().optional(), theta: z.number().nullable().optional() }).optional(),
  covariance: covariance.optional(),
  level: z.number().optional(),
  researchGrowth: researchGrowth.optional(),
  nUncertainty: z.enum(["window", "none"]).optional(),
  minObservations: z.number().int().optional(),
  bootstrap: z
    .strictObject({
      draws: z.number().int().optional(),
      blockLength: z.union([z.literal("auto"), z.number().int()]).optional(),
      seed: z.number().int().optional(),
      panelScheme: z.enum(["economies", "within-economy", "common-years"]).optional(),
    })
    .optional(),
  knifeEdgeTolerance: z.number().optional(),
  plausible: z.strictObject({ gamma: range.optional(), theta: range.optional() }).optional(),
});

export type KpfSpecFile = z.infer<typeof kpfSpecInputSchema>;

/** A spec problem with the path of the offending field. */
export class KpfSpecError extends Error {
  constructor(
    message: string,
    readonly path: string,
  ) {
    super(message);
    this.name = "KpfSpecError";
  }
}

/**
 * Validated spec from an untrusted value (parsed JSON): shape by the zod schema, then ranges and
 * combinations by kpfSpec; a `base` names the spec the others override (deep merge).
 * Throws KpfSpecError whose message names `where` and the field path, e.g.
 * `spec.json: bootstrap.draws: expected an integer` or `spec.json: kpfSpec: level must be in (0, 1), got 2`.
 * Example: kpfSpecFromValue({ base: "reference", bootstrap: { draws: 199 } }).bootstrap.draws -> 199
 * Reference: issue 3 (named specs); zod 4 documentation (strictObject, discriminatedUnion).
 */
export function kpfSpecFromValue(value: unknown, where = "spec"): KpfSpec {
  const result = kpfSpecInputSchema.safeParse(value);
  if (!result.success) {
    const issue = result.error.issues[0];
    const path = issue.path.map(String).join(".") || "(top level)";
    throw new KpfSpecError(`${where}: ${path}: ${issue.message}`, path);
  }
  const { base, ...rest } = result.data;
  try {
    if (base !== undefined) return deriveKpfSpec(NAMED_KPF_SPECS[base], { name: rest.name ?? `${base}+file`, ...(rest as KpfSpecInput) });
    return kpfSpec(rest as KpfSpecInput);
  } catch (err) {
    const message = (err as Error).message;
    const field = /^kpfSpec: (\S+)/.exec(message)?.[1] ?? "";
    throw new KpfSpecError(`${where}: ${message}`, field);
  }
}

/**
 * Spec from JSON text (see kpfSpecFromValue). Throws KpfSpecError for invalid JSON (naming `where`) or an invalid spec.
 * Example: kpfSpecFromJson('{"scope":"panel","covariance":{"kind":"cluster"}}', "my.json").scope -> "panel"
 * Reference: RFC 8259 (JSON).
 */
export function kpfSpecFromJson(text: string, where = "spec"): KpfSpec {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (err) {
    throw new KpfSpecError(`${where}: not valid JSON (${(err as Error).message})`, "");
  }
  return kpfSpecFromValue(value, where);
}
