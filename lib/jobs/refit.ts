/**
 * Refit: for every active spec, read the panel as of the latest vintages (or given ones) and store
 * a new fit set when the data changed. Under economy scope only the economies whose inputs changed
 * are re-estimated; the others' fits are carried over unchanged (each economy's result depends
 * only on its own data, the spec and the seed). Panel scope pools all economies, so any change
 * refits the whole panel.
 */
import { createHash } from "node:crypto";
import { estimateKpf, kpfInputKey, type KpfEconomyResult } from "../estimation/kpf-estimate";
import type { KpfEconomySeries } from "../estimation/kpf-sample";
import type { KpfSpec } from "../estimation/kpf-spec";
import type { Store } from "../store/db";
import { ensureBuiltinSpecs, fitsOfSet, getAlertSettings, latestFitSet, listSpecs, saveFitSet, type StoredSpec } from "../store/fits";
import { compareFits, type FitChangeRow } from "./changes";
import { assemblePanel, getModelInputs, inputSources, resolveAsOf, type AsOf, type ModelInputs } from "../store/panel";
import { APP_VERSION } from "../version";

export interface RefitOutcome {
  spec: string;
  status: "fitted" | "unchanged" | "no-data";
  fitSetId: number | null;
  economiesRefitted: number;
  economiesCarried: number;
}

function sha(text: string): string {
  return createHash("sha256").update(text).digest("hex");
}

export function economyHash(series: KpfEconomySeries, spec: KpfSpec): string {
  return sha(kpfInputKey(series, spec));
}

/**
 * Refit every active spec (or `specNames`) as of `asOf` (default: the latest vintage of each input
 * source). Returns one outcome per spec.
 */
export async function refitAll(
  store: Store,
  opts: { asOf?: AsOf; specNames?: readonly string[]; jobRunId?: number | null; inputs?: ModelInputs; onProgress?: (line: string) => void } = {},
): Promise<RefitOutcome[]> {
  await ensureBuiltinSpecs(store);
  const inputs = opts.inputs ?? (await getModelInputs(store));
  if (!inputs) return [];
  const asOf = opts.asOf ?? (await resolveAsOf(store, inputSources(inputs)));
  const { panel, derivation, skipped } = await assemblePanel(store, inputs, asOf);
  const specs = (await listSpecs(store, { activeOnly: !opts.specNames })).filter((s) => !opts.specNames || opts.specNames.includes(s.name));
  const out: RefitOutcome[] = [];
  for (const s of specs) {
    out.push(await refitSpec(store, s, panel, asOf, { derivation, skipped, jobRunId: opts.jobRunId ?? null, inputs }));
    opts.onProgress?.(`${s.name}: ${out.at(-1)!.status} (${out.at(-1)!.economiesRefitted} refitted, ${out.at(-1)!.economiesCarried} carried)`);
  }
  return out;
}

async function refitSpec(
  store: Store,
  s: StoredSpec,
  panel: readonly KpfEconomySeries[],
  asOf: AsOf,
  ctx: { derivation: string; skipped: { economy: string; reason: string }[]; jobRunId: number | null; inputs: ModelInputs },
): Promise<RefitOutcome> {
  const spec = s.spec;
  if (!panel.length) return { spec: s.name, status: "no-data", fitSetId: null, economiesRefitted: 0, economiesCarried: 0 };
  const hashes: Record<string, string> = {};
  for (const series of panel) hashes[series.economy] = economyHash(series, spec);
  const dataHash = sha(JSON.stringify([spec, Object.entries(hashes).sort()]));
  const previous = await latestFitSet(store, s.id);
  if (previous && previous.dataHash === dataHash && sameAsOf(previous.asOf, asOf)) {
    return { spec: s.name, status: "unchanged", fitSetId: previous.id, economiesRefitted: 0, economiesCarried: 0 };
  }

  // Results that can be carried over: under economy scope every economy whose inputs did not
  // change; under panel scope all of them, but only when no economy's inputs changed.
  const before = previous ? await fitsOfSet(store, previous.id) : [];
  const reusable = new Map(
    before
      .filter((f) => f.dataHash === hashes[f.economy])
      .filter(() => spec.scope === "economy" || previous!.dataHash === dataHash)
      .map((f) => [f.economy, f]),
  );
  const stale = panel.filter((p) => !reusable.has(p.economy));
  const results: KpfEconomyResult[] = stale.length ? [...estimateKpf(spec.scope === "panel" ? panel : stale, spec)] : [];
  let carried = 0;
  if (spec.scope === "economy" || !stale.length) {
    for (const [economy, f] of reusable) {
      if (!hashes[economy]) continue;
      results.push(storedToResult(f));
      carried++;
    }
  }
  results.sort((a, b) => (a.economy < b.economy ? -1 : 1));
  const pooled = spec.scope === "panel" ? results.find((r) => r.regime !== "no-estimate") : undefined;
  const summary = {
    derivation: ctx.derivation,
    skippedEconomies: ctx.skipped,
    economies: panel.length,
    ...(pooled ? { pooled: { gamma: pooled.gamma, theta: pooled.theta, seGamma: pooled.seGamma, seTheta: pooled.seTheta, pThetaGe1: pooled.pThetaGe1 } } : {}),
  };
  let changes: FitChangeRow[] = [];
  if (previous) {
    const oldPanel = (await assemblePanel(store, ctx.inputs, previous.asOf)).panel;
    changes = compareFits(spec, oldPanel, panel, before, results, (await getAlertSettings(store)).gStarThreshold);
  }
  const fitSetId = await saveFitSet(store, {
    specId: s.id,
    asOf,
    dataHash,
    codeVersion: APP_VERSION,
    results,
    economyHashes: hashes,
    summary,
    jobRunId: ctx.jobRunId,
    changes,
    previousFitSetId: previous?.id ?? null,
  });
  return { spec: s.name, status: "fitted", fitSetId, economiesRefitted: results.length - carried, economiesCarried: carried };
}

function sameAsOf(a: AsOf, b: AsOf): boolean {
  const ka = Object.keys(a).sort(), kb = Object.keys(b).sort();
  return ka.length === kb.length && ka.every((k, i) => k === kb[i] && a[k]!.seq === b[k]!.seq);
}

/** A stored fit back in the result shape (for carrying an unchanged economy into a new fit set). */
function storedToResult(f: Awaited<ReturnType<typeof fitsOfSet>>[number]): KpfEconomyResult {
  const num = (x: number | null, inf = NaN) => (x === null ? inf : x);
  return {
    economy: f.economy,
    nobs: f.nobs,
    gamma: num(f.gamma),
    theta: num(f.theta),
    logB: num(f.logB),
    seGamma: num(f.seGamma),
    seTheta: num(f.seTheta),
    n: f.n,
    gStar: f.gStar,
    gStarLo: num(f.gStarLo, -Infinity),
    gStarHi: num(f.gStarHi, Infinity),
    pThetaGe1: f.pThetaGe1,
    regime: (f.regime ?? "no-estimate") as KpfEconomyResult["regime"],
    warnings: f.warnings,
    details: f.details as unknown as KpfEconomyResult["details"],
  };
}
