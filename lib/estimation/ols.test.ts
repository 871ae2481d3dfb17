import { existsSync, readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { matrixFromColumns, matrixFromRows } from "./linalg";
import { ols } from "./ols";

describe("ols: exact small examples", () => {
  it("fits a line through three points by hand", () => {
    // Hand-derived: X = [1 0; 1 1; 1 2], y = (1, 3, 4): X'X = [3 3; 3 5], X'y = (8, 11),
    // b = (X'X)^-1 X'y = [5 -3; -3 3]/6 (8, 11) = (7/6, 3/2); residuals (-1/6, 1/3, -1/6);
    // RSS = 1/6, sigma^2 = 1/6, (X'X)^-1 = [5/6 -1/2; -1/2 1/2]; TSS = 14/3, R^2 = 1 - (1/6)/(14/3) = 27/28.
    const fit = ols(matrixFromRows([[1, 0], [1, 1], [1, 2]]), Float64Array.of(1, 3, 4), { names: ["(Intercept)", "x"] });
    expect(fit.coefficients[0]).toBeCloseTo(7 / 6, 14); // hand-derived
    expect(fit.coefficients[1]).toBeCloseTo(3 / 2, 14); // hand-derived
    expect(Array.from(fit.residuals).map((r) => r * 6)).toEqual([-1, 2, -1].map((v) => expect.closeTo(v, 13))); // hand-derived
    expect(fit.residualSumOfSquares).toBeCloseTo(1 / 6, 14); // hand-derived
    expect(fit.sigma).toBeCloseTo(Math.sqrt(1 / 6), 14); // hand-derived
    expect(fit.residualDegreesOfFreedom).toBe(1);
    expect(fit.rank).toBe(2);
    expect(fit.bread.data[0]).toBeCloseTo(5 / 6, 14); // hand-derived (X'X)^-1 [0,0]
    expect(fit.bread.data[1]).toBeCloseTo(-1 / 2, 14); // hand-derived (X'X)^-1 [1,0]
    expect(fit.bread.data[3]).toBeCloseTo(1 / 2, 14); // hand-derived (X'X)^-1 [1,1]
    expect(fit.rSquared).toBeCloseTo(27 / 28, 14); // hand-derived
    expect(fit.adjustedRSquared).toBeCloseTo(1 - (1 / 28) * 2, 14); // hand-derived: 1 - (1 - R^2)(n - 1)/(n - k)
    expect(fit.hasIntercept).toBe(true);
    expect(fit.names).toEqual(["(Intercept)", "x"]);
    expect(Object.isFrozen(fit)).toBe(true);
    expect(fit.warnings).toEqual([]);
  });

  it("fits exactly when y is in the column space (sigma 0)", () => {
    const fit = ols(matrixFromRows([[1, 0], [1, 1], [1, 2]]), Float64Array.of(1, 3, 5));
    expect(Array.from(fit.coefficients)).toEqual([expect.closeTo(1, 14), expect.closeTo(2, 14)]); // hand-derived
    expect(fit.sigma).toBe(0);
    expect(fit.names).toEqual(["x1", "x2"]);
  });

  it("uses the uncentred R^2 without an intercept (as R summary.lm)", () => {
    // Hand-derived: y = b x with x = (1, 2), y = (1, 3): b = 7/5, RSS = (1 - 7/5)^2 + (3 - 14/5)^2 = 4/25 + 1/25 = 1/5,
    // uncentred TSS = 1 + 9 = 10, R^2 = 1 - 1/50 = 0.98.
    const fit = ols(matrixFromRows([[1], [2]]), Float64Array.of(1, 3));
    expect(fit.hasIntercept).toBe(false);
    expect(fit.coefficients[0]).toBeCloseTo(7 / 5, 15);
    expect(fit.rSquared).toBeCloseTo(0.98, 14); // hand-derived
  });

  it("reports rank deficiency as a warning naming the aliased column, with NaN estimates", () => {
    // x3 = x1 + x2 exactly: R lm() keeps x1, x2 and reports x3 as NA (common practice).
    const x1 = [1, 1, 1, 1, 1];
    const x2 = [1, 2, 3, 4, 5];
    const x3 = x1.map((v, i) => v + x2[i]);
    const y = Float64Array.of(2.1, 3.9, 6.2, 7.8, 10.1);
    const fit = ols(matrixFromColumns([x1, x2, x3]), y, { names: ["one", "trend", "onePlusTrend"] });
    expect(fit.rank).toBe(2);
    expect(fit.aliased).toEqual([false, false, true]);
    expect(Number.isNaN(fit.coefficients[2])).toBe(true);
    expect(fit.warnings).toHaveLength(1);
    expect(fit.warnings[0].code).toBe("rank-deficient");
    expect(fit.warnings[0].message).toContain("onePlusTrend");
    expect(fit.residualDegreesOfFreedom).toBe(3);
    // Same fit as without the aliased column.
    const reduced = ols(matrixFromColumns([x1, x2]), y);
    expect(fit.coefficients[0]).toBeCloseTo(reduced.coefficients[0], 12);
    expect(fit.coefficients[1]).toBeCloseTo(reduced.coefficients[1], 12);
    expect(fit.sigma).toBeCloseTo(reduced.sigma, 12);
    expect(Number.isNaN(fit.bread.data[2 + 2 * 3])).toBe(true);
    expect(fit.bread.data[1 + 1 * 3]).toBeCloseTo(reduced.bread.data[3], 12);
  });

  it("greedy pivoting also finds the rank; the aliased column is then the one taken last", () => {
    const x1 = [1, 1, 1, 1];
    const x2 = [0, 1, 2, 3];
    const fit = ols(matrixFromColumns([x1, x2, x2.map((v) => 2 * v)]), Float64Array.of(1, 2, 2, 4), { pivoting: "greedy" });
    expect(fit.rank).toBe(2);
    expect(fit.aliased.filter(Boolean)).toHaveLength(1);
  });

  it("warns when there are no residual degrees of freedom", () => {
    const fit = ols(matrixFromRows([[1, 0], [1, 1]]), Float64Array.of(1, 2));
    expect(fit.residualDegreesOfFreedom).toBe(0);
    expect(Number.isNaN(fit.sigma)).toBe(true);
    expect(fit.warnings.map((w) => w.code)).toEqual(["no-residual-degrees-of-freedom"]);
  });

  it("throws specific errors on misuse", () => {
    const x = matrixFromRows([[1, 0], [1, 1], [1, 2]]);
    expect(() => ols(x, Float64Array.of(1, 2))).toThrow(new RangeError("X has 3 rows but y has 2"));
    expect(() => ols(x, Float64Array.of(1, Number.NaN, 2))).toThrow(/y\[1\] is not finite/);
    expect(() => ols(matrixFromRows([[1, Number.POSITIVE_INFINITY], [1, 1]]), Float64Array.of(1, 2))).toThrow(/X\[0, 1\]/);
    expect(() => ols(x, Float64Array.of(1, 2, 3), { names: ["a"] })).toThrow(/2 columns but 1 names/);
    expect(() => ols(x, Float64Array.of(1, 2, 3), { refinementSteps: -1 })).toThrow(/refinementSteps/);
  });

  it("never mutates its inputs and keeps them by reference", () => {
    const x = matrixFromRows([[1, 0.5], [1, 1.5], [1, 2.25], [1, 4]]);
    const y = Float64Array.of(1, 2, 2.5, 4.5);
    const xCopy = x.data.slice();
    const yCopy = y.slice();
    const fit = ols(x, y);
    expect(Array.from(x.data)).toEqual(Array.from(xCopy));
    expect(Array.from(y)).toEqual(Array.from(yCopy));
    expect(fit.design).toBe(x);
    expect(fit.response).toBe(y);
  });
});

// ---------------------------------------------------------------------------------------------
// NIST StRD linear regression (certified values, ../shared/data/nist-strd)
// ---------------------------------------------------------------------------------------------

const NIST_DIR = fileURLToPath(new URL("../../../shared/data/nist-strd/", import.meta.url));
const haveNist = existsSync(NIST_DIR);
if (!haveNist) console.warn(`NIST StRD tests skipped: ${NIST_DIR} is absent (CI always has ../shared/data)`);

interface Certified {
  parameters: { name: string; estimate: number; standardDeviation: number }[];
  residualStandardDeviation: number;
  rSquared: number;
}

function readNist(name: string): { rows: number[][]; certified: Certified } {
  const lines = readFileSync(`${NIST_DIR}${name}.csv`, "utf8").trim().split(/\r?\n/);
  const rows = lines.slice(1).map((line) => line.split(",").map(Number));
  const certified = JSON.parse(readFileSync(`${NIST_DIR}${name}.certified.json`, "utf8")) as Certified;
  return { rows, certified };
}

/** Log relative error, capped at the digits NIST prints; log absolute error when certified = 0 (McCullough 1998). */
function lre(estimate: number, certified: number, cap = 15): number {
  const error = certified === 0 ? Math.abs(estimate) : Math.abs(estimate - certified) / Math.abs(certified);
  if (error === 0) return cap;
  return Math.min(cap, -Math.log10(error));
}

// Polynomial degree per set (NIST stores only y, x: powers are built here); 0 = use the columns as given.
const LINEAR_SETS: { name: string; degree: number; intercept: boolean; minCoefficientLre: number; minSdLre: number }[] = [
  { name: "Norris", degree: 0, intercept: true, minCoefficientLre: 9, minSdLre: 9 }, // NIST StRD Norris, certified B0-B1
  { name: "Pontius", degree: 2, intercept: true, minCoefficientLre: 9, minSdLre: 9 }, // NIST StRD Pontius
  { name: "NoInt1", degree: 0, intercept: false, minCoefficientLre: 9, minSdLre: 9 }, // NIST StRD NoInt1
  { name: "NoInt2", degree: 0, intercept: false, minCoefficientLre: 9, minSdLre: 9 }, // NIST StRD NoInt2
  { name: "Longley", degree: 0, intercept: true, minCoefficientLre: 9, minSdLre: 9 }, // NIST StRD Longley
  { name: "Wampler1", degree: 5, intercept: true, minCoefficientLre: 9, minSdLre: 9 }, // NIST StRD Wampler1
  { name: "Wampler2", degree: 5, intercept: true, minCoefficientLre: 9, minSdLre: 9 }, // NIST StRD Wampler2
  { name: "Wampler3", degree: 5, intercept: true, minCoefficientLre: 9, minSdLre: 9 }, // NIST StRD Wampler3
  { name: "Wampler4", degree: 5, intercept: true, minCoefficientLre: 7, minSdLre: 9 }, // NIST StRD Wampler4
  { name: "Wampler5", degree: 5, intercept: true, minCoefficientLre: 5.5, minSdLre: 9 }, // NIST StRD Wampler5
  { name: "Filip", degree: 10, intercept: true, minCoefficientLre: 7, minSdLre: 7 }, // NIST StRD Filip
];

describe.skipIf(!haveNist)("ols: NIST StRD linear regression, log relative error (LRE) vs certified values", () => {
  const table: { dataset: string; parameter: string; estimate: number; certified: number; LRE: number }[] = [];

  for (const set of LINEAR_SETS) {
    it(`${set.name}: every coefficient LRE >= ${set.minCoefficientLre}, SDs, residual SD and R^2 LRE >= ${set.minSdLre}`, () => {
      const { rows, certified } = readNist(set.name);
      const y = Float64Array.from(rows.map((r) => r[0]));
      const columns: number[][] = [];
      if (set.intercept) columns.push(rows.map(() => 1));
      if (set.degree > 0) for (let d = 1; d <= set.degree; d++) columns.push(rows.map((r) => r[1] ** d));
      else for (let c = 1; c < rows[0].length; c++) columns.push(rows.map((r) => r[c]));
      const fit = ols(matrixFromColumns(columns), y, { names: certified.parameters.map((p) => p.name) });
      expect(fit.rank).toBe(certified.parameters.length);
      expect(fit.warnings).toEqual([]);
      const k = fit.coefficients.length;
      certified.parameters.forEach((p, j) => {
        const b = lre(fit.coefficients[j], p.estimate);
        const sd = fit.sigma * Math.sqrt(fit.bread.data[j + j * k]);
        const s = lre(sd, p.standardDeviation);
        table.push({ dataset: set.name, parameter: p.name, estimate: fit.coefficients[j], certified: p.estimate, LRE: Number(b.toFixed(2)) });
        table.push({ dataset: set.name, parameter: `sd(${p.name})`, estimate: sd, certified: p.standardDeviation, LRE: Number(s.toFixed(2)) });
        expect(b, `NIST StRD ${set.name}, certified ${p.name}: LRE ${b.toFixed(2)}`).toBeGreaterThanOrEqual(set.minCoefficientLre);
        expect(s, `NIST StRD ${set.name}, certified sd(${p.name}): LRE ${s.toFixed(2)}`).toBeGreaterThanOrEqual(set.minSdLre);
      });
      const rsd = lre(fit.sigma, certified.residualStandardDeviation);
      const r2 = lre(fit.rSquared, certified.rSquared);
      table.push({ dataset: set.name, parameter: "residual SD", estimate: fit.sigma, certified: certified.residualStandardDeviation, LRE: Number(rsd.toFixed(2)) });
      table.push({ dataset: set.name, parameter: "R-squared", estimate: fit.rSquared, certified: certified.rSquared, LRE: Number(r2.toFixed(2)) });
      expect(rsd, `NIST StRD ${set.name}, certified residual SD: LRE ${rsd.toFixed(2)}`).toBeGreaterThanOrEqual(set.minSdLre);
      expect(r2, `NIST StRD ${set.name}, certified R-squared: LRE ${r2.toFixed(2)}`).toBeGreaterThanOrEqual(set.minSdLre);
    });
  }

  it("prints the LRE table", () => {
    console.log("NIST StRD linear regression: log relative error of ols() vs certified values (cap 15)");
    console.table(table);
    expect(table.length).toBeGreaterThan(0);
  });
});
