// The `reference` and `reference-panel` specs against R on the committed synthetic panel
// test/reference/synthetic-panel.csv (INVENTED data, 6 fictional economies; see
// test/reference/make-synthetic-panel.R). Expected values: test/reference/r-reference.json, written by
// test/reference/fit-reference.R (R 4.2.2, sandwich 3.0.2). Tolerances: coefficients 1e-10 relative,
// standard errors 1e-8 relative (issue 3).
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { type KpfCovarianceChoice, REFERENCE_PANEL_SPEC, REFERENCE_SPEC } from "./kpf-spec";
import { kpfAutoHacLags, kpfCovariance } from "./kpf-covariance";
import { fitKpf } from "./kpf-fit";
import type { KpfEconomySeries } from "./kpf-sample";
import { impliedGrowth } from "./implied-growth";

const root = path.resolve(import.meta.dirname, "../..");
const panelFile = path.join(root, "test/reference/synthetic-panel.csv");
const referenceFile = path.join(root, "test/reference/r-reference.json");
const present = existsSync(panelFile) && existsSync(referenceFile);
if (!present) console.warn(`SKIP R reference checks of the KPF specs: ${referenceFile} or ${panelFile} not found`);

interface EconomyReference {
  observations: number;
  years: number[];
  nonPositiveGrowthYears: number;
  lag: number;
  coefficients: Record<"(Intercept)" | "lnR" | "lnA", number>;
  sigma: number;
  rSquared: number;
  se: Record<"classical" | "HC0" | "HC1" | "HC3" | "NeweyWest", Record<"(Intercept)" | "lnR" | "lnA", number>>;
  researcherGrowth: { t0: number; t1: number; n: number };
}

/** Reads the synthetic panel (empty cells missing). */
function readSyntheticPanel(file: string): KpfEconomySeries[] {
  const records = parse(readFileSync(file, "utf8"), { columns: true, skip_empty_lines: true }) as Record<string, string>[];
  const by = new Map<string, { years: number[]; researchers: (number | null)[]; tfp: (number | null)[]; population: (number | null)[] }>();
  for (const r of records) {
    let s = by.get(r.economy);
    if (!s) by.set(r.economy, (s = { years: [], researchers: [], tfp: [], population: [] }));
    s.years.push(Number(r.year));
    s.researchers.push(r.researchers === "" ? null : Number(r.researchers));
    s.tfp.push(r.tfp === "" ? null : Number(r.tfp));
    s.population.push(r.population === "" ? null : Number(r.population));
  }
  return [...by].map(([economy, s]) => ({ economy, ...s }));
}

function relative(actual: number, expected: number): number {
  return Math.abs(actual - expected) / Math.abs(expected);
}

describe.skipIf(!present)("reference spec vs R lm + sandwich, per economy", () => {
  const reference = present ? (JSON.parse(readFileSync(referenceFile, "utf8")) as { economies: Record<string, EconomyReference> }) : { economies: {} };
  const panel = present ? readSyntheticPanel(panelFile) : [];

  it("covers every economy of the panel", () => {
    expect(panel.map((s) => s.economy).sort()).toEqual(Object.keys(reference.economies).sort());
  });

  for (const economy of Object.keys(reference.economies)) {
    it(`${economy}: sample, coefficients, sigma, R^2, five covariances and n`, () => {
      const ref = reference.economies[economy];
      const series = panel.find((s) => s.economy === economy)!;
      const fit = fitKpf(series, REFERENCE_SPEC);
      expect(fit.estimated).toBe(true);
      expect(fit.rows.map((r) => r.year)).toEqual(ref.years); // R: build_sample() in fit-reference.R
      expect(fit.samples[0].nonPositiveYears.length).toBe(ref.nonPositiveGrowthYears); // R: nonpos count
      expect(kpfAutoHacLags(fit)).toBe(ref.lag); // R: floor(4 * (T/100)^(2/9))
      const regression = fit.regression!;
      const names = ["(Intercept)", "lnR", "lnA"] as const;
      names.forEach((name, j) => {
        expect(relative(regression.coefficients[j], ref.coefficients[name])).toBeLessThan(1e-10); // R 4.2.2 lm coef, r-reference.json, rel 1e-10
      });
      expect(relative(fit.parameters.gamma, ref.coefficients.lnR)).toBeLessThan(1e-10); // gamma = lnR coefficient, rel 1e-10
      expect(Math.abs(fit.parameters.theta - (1 + ref.coefficients.lnA))).toBeLessThan(1e-10 * Math.abs(ref.coefficients.lnA)); // theta = 1 + lnA coefficient
      expect(relative(regression.sigma, ref.sigma)).toBeLessThan(1e-10); // R summary(m)$sigma, rel 1e-10
      const choices: [keyof EconomyReference["se"], KpfCovarianceChoice][] = [
        ["classical", { kind: "classical" }],
        ["HC0", { kind: "HC", type: "HC0" }],
        ["HC1", { kind: "HC", type: "HC1" }],
        ["HC3", { kind: "HC", type: "HC3" }],
        ["NeweyWest", REFERENCE_SPEC.covariance],
      ];
      for (const [key, choice] of choices) {
        const cov = kpfCovariance(fit, choice);
        names.forEach((name, j) => {
          // R 4.2.2 vcov / sandwich 3.0.2 vcovHC(type) / NeweyWest(m, lag = L, prewhite = FALSE, adjust = TRUE), r-reference.json, rel 1e-8
          expect(relative(cov.coefficients.standardErrors[j], ref.se[key][name]), `${economy} ${key} ${name}`).toBeLessThan(1e-8);
        });
        expect(relative(cov.standardErrors[0], ref.se[key].lnR)).toBeLessThan(1e-8); // se(gamma) = se(lnR), rel 1e-8
        expect(relative(cov.standardErrors[1], ref.se[key].lnA)).toBeLessThan(1e-8); // se(theta) = se(lnA), rel 1e-8
      }
      const implied = impliedGrowth(fit, kpfCovariance(fit), { draws: 0 });
      const n = implied.economies[0].n;
      expect(n.t0).toBe(ref.researcherGrowth.t0); // R: earliest year with data in [t1 - 10, t1)
      expect(n.t1).toBe(ref.researcherGrowth.t1); // R: last year with researcher data
      expect(relative(n.value!, ref.researcherGrowth.n)).toBeLessThan(1e-12); // R (log(R_t1) - log(R_t0))/(t1 - t0), rel 1e-12
    });
  }
});

describe.skipIf(!present)("reference-panel spec vs R lm(y - lnR ~ lnA + factor(economy)) + sandwich::vcovCL", () => {
  it("matches the pooled coefficients, classical and CR1 standard errors", () => {
    const reference = JSON.parse(readFileSync(referenceFile, "utf8")) as {
      pooled: { observations: number; coefficientNames: string[]; coefficients: number[]; seClassical: number[]; seClusterHC1: number[] };
    };
    const fit = fitKpf(readSyntheticPanel(panelFile), REFERENCE_PANEL_SPEC);
    const pooled = reference.pooled;
    expect(fit.rows.length).toBe(pooled.observations); // R nrow(pooled)
    expect(fit.regression!.names).toEqual(["(Intercept)", "lnA", ...pooled.coefficientNames.slice(2).map((n) => n.replace("factor(economy)", "economy"))]);
    pooled.coefficients.forEach((value, j) => {
      expect(relative(fit.regression!.coefficients[j], value), pooled.coefficientNames[j]).toBeLessThan(1e-10); // R 4.2.2 lm coef, rel 1e-10
    });
    const classical = kpfCovariance(fit, { kind: "classical" });
    const cluster = kpfCovariance(fit);
    pooled.seClassical.forEach((value, j) => {
      expect(relative(classical.coefficients.standardErrors[j], value), pooled.coefficientNames[j]).toBeLessThan(1e-8); // R vcov(m), rel 1e-8
    });
    pooled.seClusterHC1.forEach((value, j) => {
      // R sandwich 3.0.2 vcovCL(m, cluster = ~economy, type = "HC1"), r-reference.json, rel 1e-8
      expect(relative(cluster.coefficients.standardErrors[j], value), pooled.coefficientNames[j]).toBeLessThan(1e-8);
    });
    expect(fit.parameters.gamma).toBe(1); // restricted
    expect(Math.abs(fit.parameters.theta - (1 + pooled.coefficients[1]))).toBeLessThan(1e-10 * Math.abs(pooled.coefficients[1]));
    expect(relative(cluster.standardErrors[1], pooled.seClusterHC1[1])).toBeLessThan(1e-8); // se(theta), rel 1e-8
    // ln B of economy e = intercept + its dummy (first economy: the intercept), with the standard error of that sum
    expect(relative(fit.parameters.logB[0], pooled.coefficients[0])).toBeLessThan(1e-10);
    expect(relative(fit.parameters.logB[2], pooled.coefficients[0] + pooled.coefficients[3])).toBeLessThan(1e-10);
    expect(relative(cluster.standardErrors[4], pooled.seClusterHC1[0])).toBeLessThan(1e-8);
    // each economy keeps its own n and g* = n / (1 - theta)
    const implied = impliedGrowth(fit, cluster, { draws: 0 });
    for (const e of implied.economies) {
      expect(relative(e.gStar!, e.n.value! / (1 - fit.parameters.theta))).toBeLessThan(1e-14);
    }
  });
});
