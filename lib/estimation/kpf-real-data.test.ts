// The named specs on real series: researchers = World Bank WDI SP.POP.SCIE.RD.P6 (researchers in R&D
// per million people, vintage 2026-04-01) x SP.POP.TOTL (population, vintage 2026-04-01) / 1e6, and
// TFP = Penn World Table 10.01 rtfpna, for every economy with at least 10 years of both.
// Checks: the team default gives a usable answer (theta plausible, its interval inside one regime)
// while single-economy annual fits scatter as issue 3 describes. Prints the comparison.
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { estimateKpf } from "./kpf-estimate";
import type { KpfEconomySeries } from "./kpf-sample";
import { REFERENCE_PANEL_SPEC, REFERENCE_SPEC, TEAM_DEFAULT_SPEC } from "./kpf-spec";
import { researchersFromPerMillion } from "./research-growth";

const dataDir = path.resolve(import.meta.dirname, "../../../shared/data");
const files = {
  researchers: path.join(dataDir, "wdi/sp.pop.scie.rd.p6/2026-04-01.csv"),
  population: path.join(dataDir, "wdi/sp.pop.totl/2026-04-01.csv"),
  pwt: path.join(dataDir, "pwt/pwt10.01-growth-subset.csv"),
};
const present = Object.values(files).every(existsSync);
if (!present) console.warn(`SKIP KPF real-data checks: ${Object.values(files).join(", ")} not all found (reference data lives in ../shared/data)`);

function readPanel(): KpfEconomySeries[] {
  const read = (file: string) => parse(readFileSync(file, "utf8"), { columns: true, skip_empty_lines: true, bom: true }) as Record<string, string>[];
  const byKey = (rows: Record<string, string>[]) => new Map(rows.map((r) => [`${r["Country Code"]}|${r.Year}`, Number(r.Value)]));
  const perMillion = byKey(read(files.researchers));
  const population = byKey(read(files.population));
  const pwt = new Map<string, Record<string, string>[]>();
  for (const r of read(files.pwt)) {
    let list = pwt.get(r.isocode);
    if (!list) pwt.set(r.isocode, (list = []));
    list.push(r);
  }
  const panel: KpfEconomySeries[] = [];
  for (const [economy, rows] of pwt) {
    const years = rows.map((r) => Number(r.year));
    const pop = years.map((y) => population.get(`${economy}|${y}`) ?? null);
    const rd = years.map((y) => perMillion.get(`${economy}|${y}`) ?? null);
    // a published zero per million is not a usable level: treated as missing
    const researchers = researchersFromPerMillion(rd, pop).map((v) => (v !== null && v > 0 ? v : null));
    const tfp = rows.map((r) => (r.rtfpna === "" ? null : Number(r.rtfpna)));
    const both = years.filter((_, i) => researchers[i] !== null && tfp[i] !== null).length;
    if (both >= 10) panel.push({ economy, years, researchers, tfp, population: pop });
  }
  return panel;
}

describe.skipIf(!present)("named specs on WDI researchers and PWT 10.01 TFP", () => {
  const panel = present ? readPanel() : [];

  it("the team default gives a usable pooled answer where single-economy annual fits scatter", () => {
    const single = estimateKpf(panel, REFERENCE_SPEC).filter((r) => r.regime !== "no-estimate");
    const pooled = estimateKpf(panel, TEAM_DEFAULT_SPEC).filter((r) => r.regime !== "no-estimate");
    const annualPanel = estimateKpf(panel, REFERENCE_PANEL_SPEC).filter((r) => r.regime !== "no-estimate");
    const [lo, hi] = REFERENCE_SPEC.plausible.theta;
    const thetas = single.map((r) => r.theta).sort((a, b) => a - b);
    const plausible = thetas.filter((t) => t >= lo && t <= hi).length;
    const q = (p: number) => thetas[Math.floor(p * (thetas.length - 1))].toFixed(1);
    const t = pooled[0];
    console.log(
      [
        `Real data (WDI 2026-04-01 researchers x population, PWT 10.01 rtfpna): ${panel.length} economies with >= 10 years of both.`,
        `  reference (single economy, annual): ${single.length} estimated; theta min ${q(0)}, quartiles ${q(0.25)} / ${q(0.5)} / ${q(0.75)}, max ${q(1)}; ` +
          `${plausible} of ${single.length} inside [${lo}, ${hi}]; regimes ${["converging", "knife-edge", "explosive"].map((g) => `${g} ${single.filter((r) => r.regime === g).length}`).join(", ")}.`,
        `  reference-panel (annual, gamma = 1): theta ${annualPanel[0].theta.toFixed(3)} [${annualPanel[0].details.intervals.theta.lower.toFixed(3)}, ${annualPanel[0].details.intervals.theta.upper.toFixed(3)}], ${annualPanel.length} economies, ${annualPanel[0].details.pooledObservations} observations.`,
        `  team-default (HP trend, gamma = 1): theta ${t.theta.toFixed(3)} (se ${t.seTheta.toFixed(3)}) [${t.details.intervals.theta.lower.toFixed(3)}, ${t.details.intervals.theta.upper.toFixed(3)}], ` +
          `P(theta >= 1) = ${t.pThetaGe1}, ${pooled.length} economies, ${t.details.pooledObservations} observations.`,
        `  team-default g* (90% interval), selected: ${pooled
          .filter((r) => ["USA", "DEU", "JPN", "KOR", "CHN", "GBR", "FRA"].includes(r.economy))
          .map((r) => `${r.economy} ${(100 * r.gStar!).toFixed(2)}% [${(100 * r.gStarLo).toFixed(2)}, ${(100 * r.gStarHi).toFixed(2)}]`)
          .join("; ")}`,
      ].join("\n"),
    );
    // issue 3: single-economy annual fits give theta of +30 or -100 on real series
    expect(thetas[0]).toBeLessThan(-50); // World Bank WDI x PWT 10.01, single-economy annual fits: some theta below -50
    expect(thetas[thetas.length - 1]).toBeGreaterThan(20); // ... and some above +20
    expect(plausible / thetas.length).toBeLessThan(0.5); // most single-economy estimates are implausible
    // the team default: one common theta inside the plausible range, interval inside the converging regime
    expect(pooled.length).toBeGreaterThanOrEqual(30); // about 30 economies or more enter the pooled fit
    expect(t.theta).toBeGreaterThanOrEqual(lo);
    expect(t.theta).toBeLessThanOrEqual(hi);
    expect(t.details.intervals.theta.upper).toBeLessThan(1 - TEAM_DEFAULT_SPEC.knifeEdgeTolerance);
    expect(t.pThetaGe1).toBe(0);
    expect(pooled.every((r) => r.regime === "converging" && !r.warnings.some((w) => /spans regimes|Implausible/.test(w)))).toBe(true);
    // g* of the United States within the range practitioners discuss: 0 to 3% a year [practice]
    const usa = pooled.find((r) => r.economy === "USA")!;
    expect(usa.gStar!).toBeGreaterThan(0);
    expect(usa.gStar!).toBeLessThan(0.03);
  });
});
