/**
 * Checks OLS and the covariance estimators against R 4.2.2 + sandwich 3.0-2 on the committed
 * synthetic panel (test/reference/synthetic-panel.csv, invented economies XAA-XAF). The R output is
 * committed (test/reference/r-reference.json, written by test/reference/fit-reference.R), so this
 * test needs no R. Tolerances: coefficients 1e-10 relative, standard errors 1e-8 relative.
 */
import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { classicalCovariance, clusterCovariance, hcCovariance, neweyWestCovariance, neweyWestLags } from "./covariance";
import { matrixFromColumns } from "./linalg";
import { ols } from "./ols";

const REFERENCE_DIR = fileURLToPath(new URL("../../test/reference/", import.meta.url));

interface EconomyReference {
  observations: number;
  years: number[];
  nonPositiveGrowthYears: number;
  lag: number;
  coefficients: Record<string, number>;
  sigma: number;
  rSquared: number;
  se: Record<"classical" | "HC0" | "HC1" | "HC3" | "NeweyWest" | "NeweyWestPrewhite" | "NeweyWestPrewhiteNoAdjust", Record<string, number>>;
  researcherGrowth: { t0: number; t1: number; n: number };
}
interface Reference {
  rVersion: string;
  sandwichVersion: string;
  economies: Record<string, EconomyReference>;
  pooled: { observations: number; coefficientNames: string[]; coefficients: number[]; seClassical: number[]; seClusterHC1: number[] };
}

const reference = JSON.parse(readFileSync(`${REFERENCE_DIR}r-reference.json`, "utf8")) as Reference;

interface PanelRow {
  economy: string;
  year: number;
  researchers: number | null;
  tfp: number | null;
  population: number | null;
}

function readPanel(): PanelRow[] {
  const lines = readFileSync(`${REFERENCE_DIR}synthetic-panel.csv`, "utf8").trim().split(/\r?\n/);
  const header = lines[0].split(",");
  expect(header).toEqual(["economy", "year", "researchers", "tfp", "population"]);
  const value = (s: string): number | null => (s === "" || s === "NA" ? null : Number(s));
  return lines.slice(1).map((line) => {
    const [economy, year, researchers, tfp, population] = line.split(",");
    return { economy, year: Number(year), researchers: value(researchers), tfp: value(tfp), population: value(population) };
  });
}

/**
 * The `reference` specification (as test/reference/fit-reference.R): observation t is used when
 * A_t, A_{t-1} and R_{t-1} are present and A_t > A_{t-1}; y = ln(ln(A_t / A_{t-1})); regressors
 * intercept, ln R_{t-1}, ln A_{t-1}.
 */
function buildSample(rows: PanelRow[]): { years: number[]; y: number[]; lnR: number[]; lnA: number[] } {
  const byYear = new Map(rows.map((r) => [r.year, r]));
  const out = { years: [] as number[], y: [] as number[], lnR: [] as number[], lnA: [] as number[] };
  for (const row of [...rows].sort((a, b) => a.year - b.year)) {
    const previous = byYear.get(row.year - 1);
    if (!previous) continue;
    const at = row.tfp;
    const a0 = previous.tfp;
    const r0 = previous.researchers;
    if (at === null || a0 === null || r0 === null) continue;
    if (!(at > a0)) continue;
    out.years.push(row.year);
    out.y.push(Math.log(Math.log(at / a0)));
    out.lnR.push(Math.log(r0));
    out.lnA.push(Math.log(a0));
  }
  return out;
}

const worst = { coefficients: 0, standardErrors: 0 };

function expectRelative(actual: number, expected: number, tolerance: number, label: string): void {
  const error = Math.abs(actual - expected) / Math.abs(expected);
  if (label.includes(" SE ")) worst.standardErrors = Math.max(worst.standardErrors, error);
  else if (label.includes("coef")) worst.coefficients = Math.max(worst.coefficients, error);
  expect(error, `${label}: ${actual} vs R ${expected} (relative error ${error.toExponential(2)})`).toBeLessThanOrEqual(tolerance);
}

const panel = readPanel();
const economies = [...new Set(panel.map((r) => r.economy))].sort();
const NAMES = ["(Intercept)", "lnR", "lnA"];

describe(`R reference (${reference.rVersion}, sandwich ${reference.sandwichVersion}) on the synthetic panel`, () => {
  it("has the economies R used", () => {
    expect(economies).toEqual(Object.keys(reference.economies).sort());
  });

  for (const economy of economies) {
    it(`${economy}: sample, OLS coefficients (1e-10) and classical, HC0, HC1, HC3, Newey-West (plain and prewhitened) SEs (1e-8)`, () => {
      const ref = reference.economies[economy];
      const sample = buildSample(panel.filter((r) => r.economy === economy));
      expect(sample.years).toEqual(ref.years); // R fit-reference.R: same usable years
      const T = sample.y.length;
      expect(T).toBe(ref.observations);
      expect(neweyWestLags(T)).toBe(ref.lag); // R: floor(4 * (T/100)^(2/9))
      const fit = ols(matrixFromColumns([sample.y.map(() => 1), sample.lnR, sample.lnA]), Float64Array.from(sample.y), { names: NAMES });
      NAMES.forEach((name, j) => expectRelative(fit.coefficients[j], ref.coefficients[name], 1e-10, `R lm ${economy} coef ${name}`));
      expectRelative(fit.sigma, ref.sigma, 1e-10, `R summary(lm)$sigma ${economy}`);
      expectRelative(fit.rSquared, ref.rSquared, 1e-10, `R summary(lm)$r.squared ${economy}`);
      const estimates = {
        classical: classicalCovariance(fit), // R vcov(m)
        HC0: hcCovariance(fit, "HC0"), // R sandwich::vcovHC(m, type = "HC0")
        HC1: hcCovariance(fit, "HC1"), // R sandwich::vcovHC(m, type = "HC1")
        HC3: hcCovariance(fit, "HC3"), // R sandwich::vcovHC(m, type = "HC3")
        NeweyWest: neweyWestCovariance(fit), // R sandwich::NeweyWest(m, lag = floor(4*(T/100)^(2/9)), prewhite = FALSE, adjust = TRUE)
        NeweyWestPrewhite: neweyWestCovariance(fit, { prewhite: true }), // R sandwich::NeweyWest(m, lag = L, prewhite = TRUE, adjust = TRUE)
        NeweyWestPrewhiteNoAdjust: neweyWestCovariance(fit, { prewhite: true, adjust: false }), // R sandwich::NeweyWest(m, lag = L, prewhite = TRUE, adjust = FALSE)
      } as const;
      expect(estimates.NeweyWest.lags).toBe(ref.lag);
      for (const [method, cov] of Object.entries(estimates)) {
        NAMES.forEach((name, j) =>
          expectRelative(cov.standardErrors[j], ref.se[method as keyof typeof estimates][name], 1e-8, `R ${method} SE ${economy} ${name}`),
        );
      }
    });

    it(`${economy}: researcher growth n over the trailing 10-year window matches R`, () => {
      // R fit-reference.R: t1 = last year with researchers, t0 = earliest year with researchers in [t1 - 10, t1)
      const ref = reference.economies[economy].researcherGrowth;
      const withR = panel.filter((r) => r.economy === economy && r.researchers !== null);
      const t1 = Math.max(...withR.map((r) => r.year));
      const t0 = Math.min(...withR.filter((r) => r.year >= t1 - 10 && r.year < t1).map((r) => r.year));
      const at = (year: number) => withR.find((r) => r.year === year)!.researchers!;
      const n = (Math.log(at(t1)) - Math.log(at(t0))) / (t1 - t0);
      expect([t0, t1]).toEqual([ref.t0, ref.t1]);
      expectRelative(n, ref.n, 1e-12, `R researcher growth ${economy}`);
    });
  }

  it("pooled fixed-effects regression with gamma = 1: coefficients (1e-10), classical and vcovCL HC1 SEs (1e-8)", () => {
    // R: lm(y - lnR ~ lnA + factor(economy)); sandwich::vcovCL(m, cluster = ~economy, type = "HC1")
    const rows: { economy: string; y: number; lnR: number; lnA: number }[] = [];
    for (const economy of economies) {
      const s = buildSample(panel.filter((r) => r.economy === economy));
      s.y.forEach((v, i) => rows.push({ economy, y: v, lnR: s.lnR[i], lnA: s.lnA[i] }));
    }
    expect(rows.length).toBe(reference.pooled.observations);
    // Treatment coding as R: intercept = first economy, one dummy per other economy.
    const columns: number[][] = [rows.map(() => 1), rows.map((r) => r.lnA)];
    for (const economy of economies.slice(1)) columns.push(rows.map((r) => (r.economy === economy ? 1 : 0)));
    const fit = ols(
      matrixFromColumns(columns),
      Float64Array.from(rows.map((r) => r.y - r.lnR)),
      { names: reference.pooled.coefficientNames },
    );
    const classical = classicalCovariance(fit);
    const clustered = clusterCovariance(fit, rows.map((r) => r.economy)); // defaults: type HC1, cadjust TRUE
    reference.pooled.coefficientNames.forEach((name, j) => {
      expectRelative(fit.coefficients[j], reference.pooled.coefficients[j], 1e-10, `R pooled lm coef ${name}`);
      expectRelative(classical.standardErrors[j], reference.pooled.seClassical[j], 1e-8, `R pooled classical SE ${name}`);
      expectRelative(clustered.standardErrors[j], reference.pooled.seClusterHC1[j], 1e-8, `R pooled vcovCL HC1 SE ${name}`);
    });
  });

  it("prints the largest relative differences from R", () => {
    console.log(
      `largest relative difference from R: coefficients ${worst.coefficients.toExponential(2)} (tolerance 1e-10), ` +
        `standard errors ${worst.standardErrors.toExponential(2)} (tolerance 1e-8)`,
    );
    expect(worst.coefficients).toBeLessThanOrEqual(1e-10);
  });
});
