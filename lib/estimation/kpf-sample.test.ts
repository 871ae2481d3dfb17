import { describe, expect, it } from "vitest";
import { createMatrix } from "./linalg";
import { type KpfEconomySeries, buildKpfSample, hodrickPrescottTrend, validateKpfPanel, validateKpfSeries } from "./kpf-sample";
import { REFERENCE_SPEC, kpfSpec } from "./kpf-spec";
import { ols } from "./ols";

// Invented series for the sample rules (not data).
const series: KpfEconomySeries = {
  economy: "XAA",
  years: [2000, 2001, 2002, 2003, 2004, 2005, 2006],
  researchers: [100, 110, null, 130, 140, 150, 160],
  tfp: [1.0, 1.01, 1.02, 1.0, 1.03, null, 1.05],
};

describe("the reference sample rule", () => {
  it("uses t when A_t, A_{t-1} and R_{t-1} are present and A_t > A_{t-1}, counting what it drops", () => {
    const sample = buildKpfSample(series, REFERENCE_SPEC);
    // By hand: 2001 (A up, R_2000 present) used; 2002 (A up, R_2001 present) used; 2003 (A down) dropped
    // as non-positive; 2004 (A up, R_2003 present) used; 2005 (A missing) and 2006 (A_2005 missing) not candidates.
    expect(sample.rows.map((r) => r.year)).toEqual([2001, 2002, 2004]);
    expect(sample.nonPositiveYears).toEqual([2003]);
    expect(sample.missingInputYears).toEqual([]);
    expect(sample.candidates).toBe(4);
    const [r2001, , r2004] = sample.rows;
    expect(r2001.growth).toBe(Math.log(1.01) - Math.log(1.0)); // g = ln A_t - ln A_{t-1}, exact
    expect(r2001.lnR).toBe(Math.log(100)); // R at t-1
    expect(r2001.lnA).toBe(Math.log(1.0)); // A at t-1
    expect(r2004.inputYear).toBe(2003);
    expect(sample.warnings[0]).toBe(
      "XAA: 1 of 4 growth observations were zero or negative and were dropped (the log of growth is undefined): 2003.",
    );
  });

  it("drops a year whose lagged researcher figure is missing", () => {
    const sample = buildKpfSample({ ...series, researchers: [100, null, 120, 130, 140, 150, 160] }, REFERENCE_SPEC);
    expect(sample.rows.map((r) => r.year)).toEqual([2001, 2004]); // 2002 needs R_2001
    expect(sample.missingInputYears).toEqual([2002]);
  });

  it("takes inputs L years back", () => {
    const sample = buildKpfSample(series, kpfSpec({ lagYears: 2 }));
    // 2002: inputs at 2000; 2004: inputs at 2002 (R missing): dropped; 2001: inputs at 1999 (absent): dropped.
    expect(sample.rows.map((r) => [r.year, r.inputYear])).toEqual([[2002, 2000]]);
    expect(sample.missingInputYears).toEqual([2001, 2004]);
  });
});

describe("smoothing", () => {
  const long: KpfEconomySeries = {
    economy: "XAB",
    years: Array.from({ length: 11 }, (_, i) => 2000 + i),
    researchers: Array.from({ length: 11 }, (_, i) => 100 * Math.exp(0.03 * i)),
    tfp: [1, 1.02, 1.01, 1.03, 1.05, 1.04, 1.06, 1.05, 1.08, 1.09, 1.1],
  };

  it("non-overlapping k-year averages end at the last year and step back by k", () => {
    const sample = buildKpfSample(long, kpfSpec({ smoothing: { kind: "average", years: 5 } }));
    expect(sample.rows.map((r) => [r.fromYear, r.year, r.inputYear])).toEqual([
      [2000, 2005, 2000],
      [2005, 2010, 2005],
    ]);
    expect(sample.rows[1].growth).toBeCloseTo((Math.log(1.1) - Math.log(1.04)) / 5, 15); // by hand, tol 1e-15
  });

  it("moving k-year averages give one observation a year", () => {
    const sample = buildKpfSample(long, kpfSpec({ smoothing: { kind: "average", years: 3, overlapping: true } }));
    // 2007: A_2007 = A_2004 = 1.05, zero growth, dropped (by hand)
    expect(sample.rows.map((r) => r.year)).toEqual([2003, 2004, 2005, 2006, 2008, 2009, 2010]);
    expect(sample.nonPositiveYears).toEqual([2007]);
    expect(sample.rows[0].growth).toBeCloseTo(Math.log(1.03) / 3, 15); // (ln A_2003 - ln A_2000)/3, by hand
    expect(sample.rows[0].inputYear).toBe(2000);
  });

  it("a rolling log-linear trend recovers an exact exponential", () => {
    const exact = { ...long, tfp: long.years.map((y) => Math.exp(0.0123 * (y - 2000))) };
    const sample = buildKpfSample(exact, kpfSpec({ smoothing: { kind: "trend", years: 4 } }));
    expect(sample.rows).toHaveLength(8); // 2003..2010
    for (const row of sample.rows) expect(Math.abs(row.growth - 0.0123)).toBeLessThan(1e-14); // slope of a line, by hand
    expect(sample.rows[0]).toMatchObject({ year: 2003, fromYear: 2000, inputYear: 2000 });
  });

  it("HP-trend growth uses each run of consecutive years", () => {
    const gap = { ...long, tfp: [...long.tfp.slice(0, 5), null, ...long.tfp.slice(6)] };
    const sample = buildKpfSample(gap, kpfSpec({ smoothing: { kind: "trend", method: "hp", lambda: 100 } }));
    // runs 2000-2004 (5 years: 4 growth values) and 2006-2010 (5 years: 4 growth values)
    expect(sample.rows.map((r) => r.year)).toEqual([2001, 2002, 2003, 2004, 2007, 2008, 2009, 2010]);
  });
});

describe("hodrickPrescottTrend", () => {
  it("solves (I + lambda D'D) tau = y: a hand-solved 3-point case", () => {
    // lambda = 1, y = (0, 1, 0): M = [[2,-2,1],[-2,5,-2],[1,-2,2]]; by symmetry tau = (a, b, a),
    // 3a - 2b = 0 and -4a + 5b = 1 give a = 2/7, b = 3/7 (derived by hand).
    const tau = hodrickPrescottTrend([0, 1, 0], 1);
    expect(Math.abs(tau[0] - 2 / 7)).toBeLessThan(1e-15);
    expect(Math.abs(tau[1] - 3 / 7)).toBeLessThan(1e-15);
    expect(Math.abs(tau[2] - 2 / 7)).toBeLessThan(1e-15);
  });

  it("equals the stacked least-squares solution min ||y - tau||^2 + lambda ||D tau||^2 (QR of lib/estimation), rel 1e-10", () => {
    const y = [0.1, 0.35, 0.2, 0.5, 0.45, 0.7, 0.9, 0.8, 1.1, 1.3, 1.2, 1.5];
    const n = y.length;
    const lambda = 100;
    const rows = n + n - 2;
    const x = new Float64Array(rows * n);
    const response = new Float64Array(rows);
    for (let i = 0; i < n; i++) {
      x[i + i * rows] = 1;
      response[i] = y[i];
    }
    const s = Math.sqrt(lambda);
    for (let r = 0; r < n - 2; r++) {
      x[n + r + r * rows] = s;
      x[n + r + (r + 1) * rows] = -2 * s;
      x[n + r + (r + 2) * rows] = s;
    }
    const reference = ols(createMatrix(rows, n, x), response, { intercept: false }).coefficients;
    const tau = hodrickPrescottTrend(y, lambda);
    for (let i = 0; i < n; i++) expect(Math.abs(tau[i] - reference[i])).toBeLessThan(1e-10 * Math.abs(reference[i]));
  });

  it("leaves a straight line unchanged and refuses bad input", () => {
    const tau = hodrickPrescottTrend([1, 2, 3, 4, 5], 1600);
    [1, 2, 3, 4, 5].forEach((v, i) => expect(Math.abs(tau[i] - v)).toBeLessThan(1e-12)); // D'D kills lines, by hand
    expect(() => hodrickPrescottTrend([1, 2], 100)).toThrow("hodrickPrescottTrend: needs at least 3 values, got 2");
    expect(() => hodrickPrescottTrend([1, 2, 3], 0)).toThrow("hodrickPrescottTrend: lambda must be positive, got 0");
  });
});

describe("levels and cointegration samples", () => {
  it("levels-nls keeps negative changes", () => {
    const sample = buildKpfSample({ ...series, researchers: [100, 110, 120, 130, 140, 150, 160] }, kpfSpec({ form: "levels-nls" }));
    expect(sample.rows.map((r) => r.year)).toEqual([2001, 2002, 2003, 2004]);
    expect(sample.rows[2].growth).toBeCloseTo(1.0 - 1.02, 15); // A_2003 - A_2002, by hand
    expect(sample.nonPositiveYears).toEqual([]);
    expect(sample.nonPositiveAnnualChanges).toBe(1);
  });

  it("dynamic OLS needs the changes of ln R around the input year", () => {
    const full = { ...series, researchers: [100, 110, 120, 130, 140, 150, 160] };
    const sample = buildKpfSample(full, kpfSpec({ form: "cointegration", leadsLags: 1 }));
    // t needs R at t-2..t+1 (changes at t-1, t, t+1) and A_t: 2002 (A_2002), 2003, 2004; 2006 lacks R_2007.
    expect(sample.rows.map((r) => r.year)).toEqual([2002, 2003, 2004]);
    // changes of ln R at 2001, 2002, 2003 (j = -1, 0, +1 around the input year 2002), by hand
    expect(sample.rows[0].leadsLags).toEqual([Math.log(110) - Math.log(100), Math.log(120) - Math.log(110), Math.log(130) - Math.log(120)]);
    expect(sample.rows[0].lnAt).toBe(Math.log(1.02));
  });
});

describe("validation", () => {
  it("throws naming economy, year and field", () => {
    expect(() => validateKpfSeries({ economy: "XAA", years: [2000], researchers: [-1], tfp: [1] })).toThrow(
      "XAA: researchers in 2000 is -1; levels must be positive (null for missing)",
    );
    expect(() => validateKpfSeries({ economy: "XAA", years: [2001, 2000], researchers: [1, 1], tfp: [1, 1] })).toThrow(
      "XAA: years must increase strictly, but 2000 follows 2001",
    );
    expect(() => validateKpfSeries({ economy: "XAA", years: [2000, 2001], researchers: [1], tfp: [1, 1] })).toThrow(
      "XAA: researchers has 1 values but years has 2",
    );
    expect(() => validateKpfPanel([series, series])).toThrow("economy XAA appears twice in the panel");
    expect(() => buildKpfSample(series, kpfSpec({ form: "capital-augmented" }))).toThrow("XAA: the capital-augmented form needs a capital series");
  });

  it("never mutates its input", () => {
    const copy = JSON.parse(JSON.stringify(series));
    buildKpfSample(series, kpfSpec({ smoothing: { kind: "trend", method: "hp" } }));
    expect(series).toEqual(copy);
  });
});
