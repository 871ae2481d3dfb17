/**
 * Estimation panels read from the store, as of chosen vintages. The model inputs (which source
 * and concept feed researchers, TFP and population) are a workspace setting; each economy's
 * panel carries the vintages it came from so every fit can state its data.
 */
import { z } from "zod";
import type { KpfEconomySeries } from "../estimation/kpf-sample";
import type { Store } from "./db";
import { getSetting, putSetting } from "./settings";
import { readAsOf, type StoredObservation } from "./vintages";

const inputRef = z.strictObject({ source: z.string().min(1), concept: z.string().min(1) });
export const modelInputsSchema = z.strictObject({
  /** Researchers (FTE), or researchers per million times population / 1e6 when `perMillion` is given. */
  researchers: z.union([
    inputRef,
    z.strictObject({ perMillion: inputRef, population: inputRef }),
  ]),
  tfp: inputRef,
  population: inputRef.optional(),
  capital: inputRef.optional(),
});
export type ModelInputs = z.infer<typeof modelInputsSchema>;
type InputRef = z.infer<typeof inputRef>;

const SETTING = "model-inputs";

export async function getModelInputs(store: Store): Promise<ModelInputs | null> {
  const v = await getSetting<unknown>(store, SETTING);
  return v ? modelInputsSchema.parse(v) : null;
}

export async function setModelInputs(store: Store, inputs: ModelInputs): Promise<void> {
  await putSetting(store, SETTING, modelInputsSchema.parse(inputs));
}

/** Sources the inputs read. */
export function inputSources(inputs: ModelInputs): string[] {
  const refs: InputRef[] = [inputs.tfp];
  if ("perMillion" in inputs.researchers) refs.push(inputs.researchers.perMillion, inputs.researchers.population);
  else refs.push(inputs.researchers);
  if (inputs.population) refs.push(inputs.population);
  if (inputs.capital) refs.push(inputs.capital);
  return [...new Set(refs.map((r) => r.source))];
}

/** Vintage seq per source name that a panel is read as of. */
export type AsOf = Readonly<Record<string, { seq: number; label: string }>>;

/** The latest vintage of each source (or the newest on or before `date`, by label or fetch time). */
export async function resolveAsOf(store: Store, sources: readonly string[], opts: { date?: Date; seqs?: Readonly<Record<string, number>> } = {}): Promise<AsOf> {
  const out: Record<string, { seq: number; label: string }> = {};
  for (const name of sources) {
    const where = opts.seqs?.[name] !== undefined ? { seq: opts.seqs[name] } : opts.date ? { fetchedAt: { lte: opts.date } } : {};
    const v = await store.prisma.vintage.findFirst({ where: { source: { name }, ...where }, orderBy: { seq: "desc" } });
    if (v) out[name] = { seq: v.seq, label: v.label };
  }
  return out;
}

export interface AssembledPanel {
  panel: KpfEconomySeries[];
  asOf: AsOf;
  /** How the researchers series was obtained, for the record. */
  derivation: string;
  /** Economies left out, with why. */
  skipped: { economy: string; reason: string }[];
}

/** Years keyed values of one concept per economy; the unit with the latest coverage wins when a series was rebased. */
function byEconomy(rows: readonly StoredObservation[]): Map<string, Map<number, number>> {
  const units = new Map<string, Map<string, number>>(); // economy -> unit -> last year
  for (const r of rows) {
    const u = units.get(r.economy) ?? new Map<string, number>();
    u.set(r.unit, Math.max(u.get(r.unit) ?? -Infinity, r.year));
    units.set(r.economy, u);
  }
  const chosen = new Map<string, string>();
  for (const [e, u] of units) chosen.set(e, [...u.entries()].sort((a, b) => b[1] - a[1])[0]![0]);
  const out = new Map<string, Map<number, number>>();
  for (const r of rows) {
    if (chosen.get(r.economy) !== r.unit || !/^\d{4}$/.test(r.period)) continue;
    const m = out.get(r.economy) ?? new Map<number, number>();
    m.set(r.year, r.value);
    out.set(r.economy, m);
  }
  return out;
}

async function readRef(store: Store, ref: InputRef, asOf: AsOf, economies?: readonly string[]): Promise<Map<string, Map<number, number>>> {
  const v = asOf[ref.source];
  if (!v) return new Map();
  return byEconomy(await readAsOf(store, { source: ref.source, asOfSeq: v.seq, concepts: [ref.concept], economies }));
}

/**
 * Read the estimation panel as of `asOf`: annual researchers, TFP, population (and capital) per
 * economy, aggregates left out. Researchers per million are turned into counts with population
 * (count = per million x population / 1e6) when the inputs say so.
 */
export async function assemblePanel(store: Store, inputs: ModelInputs, asOf: AsOf, opts: { economies?: readonly string[] } = {}): Promise<AssembledPanel> {
  const tfp = await readRef(store, inputs.tfp, asOf, opts.economies);
  let researchers: Map<string, Map<number, number>>;
  let derivation: string;
  if ("perMillion" in inputs.researchers) {
    const pm = await readRef(store, inputs.researchers.perMillion, asOf, opts.economies);
    const pop = await readRef(store, inputs.researchers.population, asOf, opts.economies);
    researchers = new Map();
    for (const [e, years] of pm) {
      const p = pop.get(e);
      if (!p) continue;
      const m = new Map<number, number>();
      for (const [y, v] of years) if (p.has(y)) m.set(y, (v * p.get(y)!) / 1e6);
      researchers.set(e, m);
    }
    derivation = `researchers = ${inputs.researchers.perMillion.source}/${inputs.researchers.perMillion.concept} x ${inputs.researchers.population.source}/${inputs.researchers.population.concept} / 1e6`;
  } else {
    researchers = await readRef(store, inputs.researchers, asOf, opts.economies);
    derivation = `researchers = ${inputs.researchers.source}/${inputs.researchers.concept}`;
  }
  const population = inputs.population ? await readRef(store, inputs.population, asOf, opts.economies) : new Map<string, Map<number, number>>();
  const capital = inputs.capital ? await readRef(store, inputs.capital, asOf, opts.economies) : new Map<string, Map<number, number>>();
  const kinds = new Map((await store.prisma.economy.findMany({ select: { code: true, kind: true } })).map((e) => [e.code, e.kind]));

  const panel: KpfEconomySeries[] = [];
  const skipped: { economy: string; reason: string }[] = [];
  const codes = [...new Set([...tfp.keys(), ...researchers.keys()])].sort();
  for (const e of codes) {
    if (kinds.get(e) !== "ECONOMY") continue;
    const a = tfp.get(e), r = researchers.get(e);
    if (!a || !r || a.size === 0 || r.size === 0) {
      skipped.push({ economy: e, reason: !a || a.size === 0 ? "no TFP series" : "no researcher series" });
      continue;
    }
    const allYears = [...a.keys(), ...r.keys()];
    const first = Math.min(...allYears), last = Math.max(...allYears);
    const years: number[] = [];
    for (let y = first; y <= last; y++) years.push(y);
    const col = (m: Map<number, number> | undefined) => years.map((y) => m?.get(y) ?? null);
    panel.push({
      economy: e,
      years,
      researchers: col(r),
      tfp: col(a),
      ...(inputs.population ? { population: col(population.get(e)) } : {}),
      ...(inputs.capital ? { capital: col(capital.get(e)) } : {}),
    });
  }
  return { panel, asOf, derivation, skipped };
}
