import { describe, expect, it } from "vitest";
import {
  bartlettWeights,
  classicalCovariance,
  clusterCovariance,
  coefficientTable,
  hcCovariance,
  neweyWestCovariance,
  neweyWestLags,
} from "./covariance";
import { matrixFromColumns, matrixFromRows } from "./linalg";
import { nls } from "./nls";
import { ols } from "./ols";

// Hand-derived example: y = b x (no intercept), x = (1, 2, 3, 4), y = (1, 3, 2, 5).
// sum x^2 = 30, sum xy = 33, b = 1.1; residuals e = (-0.1, 0.8, -1.3, 0.6); RSS = 2.7, sigma^2 = 0.9.
// Scores u = x e = (-0.1, 1.6, -3.9, 2.4); sum u^2 = 23.54; lag-1 cross products sum = -15.76.
const x = [1, 2, 3, 4];
const y = Float64Array.of(1, 3, 2, 5);
const fit = ols(matrixFromColumns([x]), y, { names: ["b"] });

describe("covariance estimators: hand-derived one-regressor example", () => {
  it("fit is as derived", () => {
    expect(fit.coefficients[0]).toBeCloseTo(1.1, 14); // hand-derived
    expect(fit.residualSumOfSquares).toBeCloseTo(2.7, 14); // hand-derived
  });

  it("classical: sigma^2 / sum x^2 = 0.9 / 30", () => {
    const v = classicalCovariance(fit);
    expect(v.matrix.data[0]).toBeCloseTo(0.03, 15); // hand-derived
    expect(v.standardErrors[0]).toBeCloseTo(Math.sqrt(0.03), 15);
    expect(v.degreesOfFreedom).toBe(3);
    expect(v.method).toBe("classical");
  });

  it("HC0, HC1, HC2, HC3 (MacKinnon & White 1985 formulas)", () => {
    // HC0 = sum u^2 / (sum x^2)^2 = 23.54 / 900; HC1 = HC0 * n/(n-k) = HC0 * 4/3 (hand-derived)
    expect(hcCovariance(fit, "HC0").matrix.data[0]).toBeCloseTo(23.54 / 900, 15);
    expect(hcCovariance(fit, "HC1").matrix.data[0]).toBeCloseTo((23.54 / 900) * (4 / 3), 15);
    // leverages h_i = x_i^2 / 30 (hand-derived)
    const u2 = [0.01, 2.56, 15.21, 5.76];
    const h = x.map((v) => (v * v) / 30);
    const hc2 = u2.reduce((s, v, i) => s + v / (1 - h[i]), 0) / 900;
    const hc3 = u2.reduce((s, v, i) => s + v / (1 - h[i]) ** 2, 0) / 900;
    expect(hcCovariance(fit, "HC2").matrix.data[0]).toBeCloseTo(hc2, 15);
    expect(hcCovariance(fit, "HC3").matrix.data[0]).toBeCloseTo(hc3, 15);
    expect(hcCovariance(fit).method).toBe("HC1"); // default
    expect(hcCovariance(fit, "HC3").description).toContain('sandwich::vcovHC(m, type = "HC3")');
  });

  it("cluster-robust CR1: G/(G-1) (n-1)/(n-k) sum_g s_g^2 / (sum x^2)^2", () => {
    // clusters {a: rows 0,1; b: rows 2,3}: s_a = 1.5, s_b = -1.5, sum s^2 = 4.5; factor 2 * 3/3 = 2 (hand-derived)
    const v = clusterCovariance(fit, ["a", "a", "b", "b"]);
    expect(v.matrix.data[0]).toBeCloseTo((4.5 * 2) / 900, 15);
    expect(v.clusters).toBe(2);
    expect(v.warnings.map((w) => w.code)).toEqual(["few-clusters"]);
    expect(clusterCovariance(fit, [1, 1, 2, 2], { type: "HC0", clusterAdjust: false }).matrix.data[0]).toBeCloseTo(4.5 / 900, 15);
    // one row per cluster with HC0 and no adjustment is HC0
    expect(clusterCovariance(fit, [1, 2, 3, 4], { type: "HC0", clusterAdjust: false }).matrix.data[0]).toBeCloseTo(23.54 / 900, 15);
  });

  it("Newey-West, Bartlett lag 1: (sum u^2 + 2 * 0.5 * sum u_t u_(t-1)) / (sum x^2)^2 * T/(T-k)", () => {
    // S = 23.54 + 2 * 0.5 * (-15.76) = 7.78 (hand-derived)
    const v = neweyWestCovariance(fit, { lags: 1 });
    expect(v.matrix.data[0]).toBeCloseTo((7.78 / 900) * (4 / 3), 15);
    expect(v.lags).toBe(1);
    expect(neweyWestCovariance(fit, { lags: 1, adjust: false }).matrix.data[0]).toBeCloseTo(7.78 / 900, 15);
    // lag 0 without adjustment is HC0
    expect(neweyWestCovariance(fit, { lags: 0, adjust: false }).matrix.data[0]).toBeCloseTo(23.54 / 900, 15);
    expect(v.description).toContain("sandwich::NeweyWest(m, lag = 1, prewhite = FALSE, adjust = TRUE)");
  });

  it("Newey-West within groups sums the per-group autocovariances", () => {
    // groups {a: rows 0,1; b: rows 2,3}: lag-1 products within groups: 1.6*-0.1 + 2.4*-3.9 = -9.52;
    // S = 23.54 - 9.52 = 14.02 (hand-derived)
    const v = neweyWestCovariance(fit, { lags: 1, groups: ["a", "a", "b", "b"] });
    expect(v.matrix.data[0]).toBeCloseTo((14.02 / 900) * (4 / 3), 15);
  });

  it("warns when the lag is not below the series length, and throws on misuse", () => {
    expect(neweyWestCovariance(fit, { lags: 4 }).warnings.map((w) => w.code)).toEqual(["lags-truncated"]);
    expect(() => neweyWestCovariance(fit, { lags: -1 })).toThrow(/non-negative integer/);
    expect(() => neweyWestCovariance(fit, { prewhite: true, groups: ["a", "a", "b", "b"] })).toThrow(/not available together with groups/);
    expect(() => clusterCovariance(fit, ["a", "a", "a"])).toThrow(/3 labels but the fit has 4/);
    expect(() => clusterCovariance(fit, ["a", "a", "a", "a"])).toThrow(/at least 2 clusters/);
    expect(() => hcCovariance(fit, "HC9" as "HC0")).toThrow(/unknown HC type/);
  });
});

describe("lag rule and kernel weights", () => {
  it("neweyWestLags = floor(4 (T/100)^(2/9)) (statsmodels / Newey-West 1994 rule, DOMAIN.md section 4)", () => {
    expect(neweyWestLags(30)).toBe(3); // DOMAIN.md: 3 for T = 30-70
    expect(neweyWestLags(40)).toBe(3);
    expect(neweyWestLags(70)).toBe(3);
    expect(neweyWestLags(100)).toBe(4); // computed: 4 * 1^(2/9) = 4
    expect(neweyWestLags(10)).toBe(2); // computed: 4 * 0.1^(2/9) = 2.398
    expect(neweyWestLags(1)).toBe(1); // computed: 4 * 0.01^(2/9) = 1.436
    expect(() => neweyWestLags(0)).toThrow(RangeError);
  });

  it("bartlettWeights(L) = 1 - j/(L+1)", () => {
    expect(Array.from(bartlettWeights(3))).toEqual([1, 0.75, 0.5, 0.25]); // hand-derived
    expect(Array.from(bartlettWeights(0))).toEqual([1]);
    expect(() => bartlettWeights(1.5)).toThrow(RangeError);
  });
});

describe("rank-deficient fits and NLS fits", () => {
  it("gives NaN rows/columns for aliased coefficients and the reduced-model values elsewhere", () => {
    const one = [1, 1, 1, 1, 1, 1];
    const t = [1, 2, 3, 4, 5, 6];
    const yy = Float64Array.of(1.2, 1.9, 3.4, 3.9, 5.3, 5.8);
    const full = ols(matrixFromColumns([one, t, t.map((v) => 3 * v)]), yy);
    const reduced = ols(matrixFromColumns([one, t]), yy);
    for (const [a, b] of [
      [hcCovariance(full, "HC3"), hcCovariance(reduced, "HC3")],
      [neweyWestCovariance(full, { lags: 2 }), neweyWestCovariance(reduced, { lags: 2 })],
      [clusterCovariance(full, [1, 1, 2, 2, 3, 3]), clusterCovariance(reduced, [1, 1, 2, 2, 3, 3])],
    ]) {
      expect(a.standardErrors[0]).toBeCloseTo(b.standardErrors[0], 12);
      expect(a.standardErrors[1]).toBeCloseTo(b.standardErrors[1], 12);
      expect(Number.isNaN(a.standardErrors[2])).toBe(true);
      expect(a.warnings.some((w) => w.code === "rank-deficient")).toBe(true);
    }
  });

  it("works on an NLS fit through its Jacobian (HC0 of a linear-in-parameters NLS equals OLS HC0)", () => {
    const xs = [0, 1, 2, 3, 4];
    const ys = Float64Array.of(0.9, 3.2, 4.8, 7.1, 9.2);
    const linear = ols(matrixFromRows(xs.map((v) => [1, v])), ys);
    const nonlinear = nls({ response: ys, predict: (b, out) => xs.forEach((v, i) => (out[i] = b[0] + b[1] * v)) }, [0, 0]);
    const a = hcCovariance(linear, "HC0").standardErrors;
    const b = hcCovariance(nonlinear, "HC0").standardErrors;
    expect(b[0]).toBeCloseTo(a[0], 6);
    expect(b[1]).toBeCloseTo(a[1], 6);
  });
});

describe("coefficientTable", () => {
  it("t statistics, p-values and intervals from Student t with the residual degrees of freedom", () => {
    const table = coefficientTable(fit, classicalCovariance(fit));
    const se = Math.sqrt(0.03);
    expect(table[0].name).toBe("b");
    expect(table[0].tStatistic).toBeCloseTo(1.1 / se, 13);
    // R 4.2.2: sprintf("%.17g", qt(0.975, 3)) = 3.1824463052837078
    expect(table[0].upper).toBeCloseTo(1.1 + 3.1824463052837078 * se, 12);
    // R 4.2.2: sprintf("%.17g", 2 * pt(-1.1 / sqrt(0.03), 3)) = 0.0078978382449396822 (relative 1e-12)
    expect(Math.abs(table[0].pValue / 0.0078978382449396822 - 1)).toBeLessThan(1e-12);
    expect(() => coefficientTable(fit, classicalCovariance(fit), { level: 1 })).toThrow(/level/);
  });
});
