/**
 * What moved between two fit sets of a spec, per economy: the change of g* split into a revision
 * effect and a new-data effect, regime and interval changes, new data years. The split refits the
 * new vintage's values restricted to the periods the old vintage had:
 *   revision effect = g*(new values, old sample) - g*(old fit)
 *   new-data effect = g*(new fit) - g*(new values, old sample)
 * so the two add up to the whole move (common practice in real-time data analysis: separate
 * revisions of old observations from the arrival of new ones).
 */
import { estimateKpf, type KpfEconomyResult } from "../estimation/kpf-estimate";
import type { KpfEconomySeries } from "../estimation/kpf-sample";
import type { KpfSpec } from "../estimation/kpf-spec";
import type { StoredFit } from "../store/fits";

export interface FitChangeRow {
  economy: string;
  gStarFrom: number | null;
  gStarTo: number | null;
  gStarOldSample: number | null;
  revisionEffect: number | null;
  newDataEffect: number | null;
  regimeFrom: string | null;
  regimeTo: string | null;
  intervalFrom: [number | null, number | null] | null;
  intervalTo: [number | null, number | null] | null;
  newYears: number[];
  revisedValues: number;
  flagged: boolean;
  reasons: string[];
}

type Variable = "researchers" | "tfp" | "population" | "capital";
const VARIABLES: Variable[] = ["researchers", "tfp", "population", "capital"];

function valuesByYear(s: KpfEconomySeries, v: Variable): Map<number, number> {
  const out = new Map<number, number>();
  const col = s[v];
  if (!col) return out;
  s.years.forEach((y, i) => {
    const x = col[i];
    if (x !== null && x !== undefined) out.set(y, x);
  });
  return out;
}

/** The new series with every value removed whose (year, variable) the old series did not have. */
export function restrictToOldSample(next: KpfEconomySeries, old: KpfEconomySeries): KpfEconomySeries {
  const mask = (v: Variable) => {
    const had = valuesByYear(old, v);
    const col = next[v];
    return col ? col.map((x, i) => (had.has(next.years[i]!) ? x : null)) : undefined;
  };
  return {
    economy: next.economy,
    years: next.years,
    researchers: mask("researchers")!,
    tfp: mask("tfp")!,
    ...(next.population ? { population: mask("population") } : {}),
    ...(next.capital ? { capital: mask("capital") } : {}),
  };
}

function pct(x: number): string {
  return `${(x * 100).toFixed(2)}%`;
}

/**
 * Compare an economy's old and new fits. `threshold` is the move of g* (in growth-rate units, e.g.
 * 0.001 = 0.1 percentage points) above which the change is flagged.
 */
export function compareFits(
  spec: KpfSpec,
  oldPanel: readonly KpfEconomySeries[],
  newPanel: readonly KpfEconomySeries[],
  oldFits: readonly StoredFit[],
  newResults: readonly KpfEconomyResult[],
  threshold: number,
): FitChangeRow[] {
  const oldByEconomy = new Map(oldPanel.map((s) => [s.economy, s]));
  const oldFitByEconomy = new Map(oldFits.map((f) => [f.economy, f]));
  // The new values on the old sample, estimated once (a panel spec pools them all).
  const mid = newPanel.filter((s) => oldByEconomy.has(s.economy)).map((s) => restrictToOldSample(s, oldByEconomy.get(s.economy)!));
  const changedEconomies = new Set<string>();
  const newYearsBy = new Map<string, number[]>();
  const revisedBy = new Map<string, number>();
  for (const s of newPanel) {
    const o = oldByEconomy.get(s.economy);
    const years = new Set<number>();
    let revised = 0;
    for (const v of VARIABLES) {
      const a = o ? valuesByYear(o, v) : new Map<number, number>();
      for (const [y, x] of valuesByYear(s, v)) {
        if (!a.has(y)) years.add(y);
        else if (a.get(y) !== x) revised++;
      }
    }
    newYearsBy.set(s.economy, [...years].sort((a, b) => a - b));
    revisedBy.set(s.economy, revised);
    if (years.size || revised || !o) changedEconomies.add(s.economy);
  }
  const midTargets = spec.scope === "panel" ? mid : mid.filter((s) => changedEconomies.has(s.economy));
  const midResults = midTargets.length ? new Map(estimateKpf(midTargets, spec).map((r) => [r.economy, r])) : new Map<string, KpfEconomyResult>();

  const rows: FitChangeRow[] = [];
  for (const r of newResults) {
    const f = oldFitByEconomy.get(r.economy);
    const newYears = newYearsBy.get(r.economy) ?? [];
    const revisedValues = revisedBy.get(r.economy) ?? 0;
    const gFrom = f?.gStar ?? null;
    const gTo = r.gStar;
    if (f && gFrom === gTo && f.regime === r.regime && !newYears.length && !revisedValues) continue;
    const midR = midResults.get(r.economy);
    const gMid = midR ? midR.gStar : null;
    const reasons: string[] = [];
    let flagged = false;
    if (!f) reasons.push("First estimate for this economy.");
    if (gFrom !== null && gTo !== null) {
      const move = gTo - gFrom;
      if (Math.abs(move) >= threshold) {
        flagged = true;
        reasons.push(`g* moved ${move >= 0 ? "up" : "down"} by ${(Math.abs(move) * 100).toFixed(2)} percentage points (${pct(gFrom)} to ${pct(gTo)}).`);
      }
    }
    if (f && (f.regime ?? null) !== r.regime) {
      flagged = true;
      reasons.push(`Regime changed from ${f.regime ?? "none"} to ${r.regime}.`);
    }
    if (newYears.length) {
      flagged = true;
      reasons.push(`New data for ${newYears.length === 1 ? `year ${newYears[0]}` : `years ${newYears[0]}-${newYears[newYears.length - 1]}`}.`);
    }
    if (revisedValues) reasons.push(`${revisedValues} input value${revisedValues === 1 ? "" : "s"} revised.`);
    const fin = (x: number) => (Number.isFinite(x) ? x : null);
    rows.push({
      economy: r.economy,
      gStarFrom: gFrom,
      gStarTo: gTo,
      gStarOldSample: gMid,
      revisionEffect: gFrom !== null && gMid !== null ? gMid - gFrom : null,
      newDataEffect: gTo !== null && gMid !== null ? gTo - gMid : null,
      regimeFrom: f?.regime ?? null,
      regimeTo: r.regime,
      intervalFrom: f ? [f.gStarLo, f.gStarHi] : null,
      intervalTo: [fin(r.gStarLo), fin(r.gStarHi)],
      newYears,
      revisedValues,
      flagged,
      reasons,
    });
  }
  return rows;
}
