import { readFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import {
  logBeta,
  logGamma,
  normalCdf,
  normalDensity,
  normalQuantile,
  regularizedIncompleteBeta,
  studentTCdf,
  studentTDensity,
  studentTQuantile,
  studentTTwoSidedPValue,
} from "./distributions";

// Committed R output: test/reference/distributions-reference.R -> distributions-reference.json.
const reference = JSON.parse(
  readFileSync(fileURLToPath(new URL("../../test/reference/distributions-reference.json", import.meta.url)), "utf8"),
) as {
  rVersion: string;
  pnorm: { x: number[]; value: number[] };
  qnorm: { p: number[]; value: number[] };
  pt: { t: number[]; df: number[]; value: number[] };
  qt: { p: number[]; df: number[]; value: number[] };
};

function relativeError(actual: number, expected: number): number {
  if (expected === 0) return Math.abs(actual);
  return Math.abs(actual - expected) / Math.abs(expected);
}

describe(`distributions vs ${reference.rVersion} (relative 1e-12 unless stated)`, () => {
  it("normalCdf matches R pnorm in both tails (relative 1e-14)", () => {
    reference.pnorm.x.forEach((x, i) => {
      const expected = reference.pnorm.value[i];
      // R pnorm(x) (test/reference/distributions-reference.json). R flushes results below the
      // smallest normal double (2.2e-308) to 0; we return the subnormal value (Phi(-38) = 2.9e-316).
      if (expected === 0) expect(normalCdf(x), `R pnorm(${x})`).toBeLessThan(2.3e-308);
      else expect(relativeError(normalCdf(x), expected), `R pnorm(${x})`).toBeLessThanOrEqual(1e-14);
    });
  });

  it("normalQuantile (Wichura AS 241) matches R qnorm (relative 1e-14)", () => {
    reference.qnorm.p.forEach((p, i) => {
      expect(relativeError(normalQuantile(p), reference.qnorm.value[i]), `R qnorm(${p})`).toBeLessThanOrEqual(1e-14);
    });
  });

  it("studentTCdf matches R pt for df from 1 to 1e7 (relative 1e-12)", () => {
    let worst = 0;
    reference.pt.t.forEach((t, i) => {
      const df = reference.pt.df[i];
      const expected = reference.pt.value[i];
      const error = relativeError(studentTCdf(t, df), expected);
      worst = Math.max(worst, error);
      expect(error, `R pt(${t}, ${df}) = ${expected}`).toBeLessThanOrEqual(1e-12);
    });
    console.log(`studentTCdf: worst relative error vs R pt over ${reference.pt.t.length} points: ${worst.toExponential(2)}`);
  });

  it("studentTQuantile matches R qt for df from 1 to 1e7 (relative 1e-12)", () => {
    let worst = 0;
    reference.qt.p.forEach((p, i) => {
      const df = reference.qt.df[i];
      const error = relativeError(studentTQuantile(p, df), reference.qt.value[i]);
      worst = Math.max(worst, error);
      expect(error, `R qt(${p}, ${df})`).toBeLessThanOrEqual(1e-12);
    });
    console.log(`studentTQuantile: worst relative error vs R qt over ${reference.qt.p.length} points: ${worst.toExponential(2)}`);
  });

  it("studentTQuantile gives the same R qt values when asked again, also after its memory of 1024 quantiles is full", () => {
    const check = () =>
      reference.qt.p.forEach((p, i) => {
        expect(relativeError(studentTQuantile(p, reference.qt.df[i]), reference.qt.value[i]), `R qt(${p}, ${reference.qt.df[i]})`).toBeLessThanOrEqual(1e-12);
      });
    check(); // remembered from the test above
    for (let df = 1; df <= 1100; df++) studentTQuantile(0.95, df + 0.5); // more than the memory holds
    check();
  });
});

describe("distributions: closed forms and identities", () => {
  it("Cauchy (df = 1) and df = 2 closed forms", () => {
    for (const t of [-1e6, -30, -2, -0.5, 0, 0.7, 3, 1e4]) {
      // A&S 26.7.3: F(t; 1) = 1/2 + atan(t)/pi; F(t; 2) = 1/2 + t / (2 sqrt(2 + t^2)). These forms
      // cancel in the lower tail, so they are compared with an absolute tolerance.
      expect(Math.abs(studentTCdf(t, 1) - (0.5 + Math.atan(t) / Math.PI))).toBeLessThan(1e-15);
      expect(Math.abs(studentTCdf(t, 2) - (0.5 + t / (2 * Math.sqrt(2 + t * t))))).toBeLessThan(1e-15);
    }
    expect(studentTQuantile(0.75, 1)).toBeCloseTo(1, 14); // tan(pi/4) = 1
    expect(studentTQuantile(0.975, 2)).toBeCloseTo(0.95 / Math.sqrt(2 * 0.975 * 0.025), 14); // closed form; R qt(0.975, 2) = 4.3026527297494619
  });

  it("quantiles invert the CDF, including far tails and non-integer df", () => {
    for (const df of [0.7, 1.5, 3, 7.25, 40, 250, 5000]) {
      for (const p of [1e-200, 1e-30, 1e-8, 0.01, 0.3, 0.5, 0.8, 0.999999]) {
        const t = studentTQuantile(p, df);
        if (!Number.isFinite(t)) continue;
        expect(relativeError(studentTCdf(t, df), p), `df ${df}, p ${p}`).toBeLessThan(1e-12);
      }
    }
  });

  it("limits: df = Infinity is the normal; edge probabilities", () => {
    expect(studentTCdf(1.3, Number.POSITIVE_INFINITY)).toBe(normalCdf(1.3));
    expect(studentTQuantile(0.9, Number.POSITIVE_INFINITY)).toBe(normalQuantile(0.9));
    expect(normalQuantile(0)).toBe(Number.NEGATIVE_INFINITY);
    expect(normalQuantile(1)).toBe(Number.POSITIVE_INFINITY);
    expect(normalQuantile(0.5)).toBe(0);
    expect(studentTQuantile(0.5, 4)).toBe(0);
    expect(studentTCdf(0, 4)).toBe(0.5);
    expect(Number.isNaN(normalCdf(Number.NaN))).toBe(true);
  });

  it("known values (R 4.2.2 where stated, else exact identities)", () => {
    expect(normalQuantile(0.975)).toBeCloseTo(1.959963984540054, 15); // R qnorm(0.975)
    expect(normalCdf(0)).toBe(0.5);
    expect(normalDensity(0)).toBeCloseTo(0.3989422804014327, 16);
    expect(studentTDensity(0, 1)).toBeCloseTo(1 / Math.PI, 14);
    expect(studentTTwoSidedPValue(2.2281388519862739, 10)).toBeCloseTo(0.05, 14); // R qt(0.975, 10) = 2.2281388519862739
    expect(logGamma(0.5)).toBeCloseTo(0.5723649429247001, 14); // ln sqrt(pi)
    expect(logGamma(10)).toBeCloseTo(Math.log(362880), 13); // ln 9!
    expect(logGamma(171)).toBeCloseTo(706.57306224578747, 11); // R lgamma(171) = ln 170!
    expect(logBeta(2, 3)).toBeCloseTo(Math.log(1 / 12), 14); // B(2,3) = 1!2!/4! = 1/12
    expect(logBeta(1e6, 0.5)).toBeCloseTo(logGamma(1e6) + logGamma(0.5) - logGamma(1e6 + 0.5), 8);
    expect(regularizedIncompleteBeta(0.5, 2, 2)).toBeCloseTo(0.5, 14); // symmetric
    expect(regularizedIncompleteBeta(0.3, 1, 1)).toBeCloseTo(0.3, 14); // uniform
    expect(regularizedIncompleteBeta(0.2, 2, 1)).toBeCloseTo(0.04, 14); // x^2
  });

  it("throws on misuse", () => {
    expect(() => normalQuantile(1.5)).toThrow(/probability must be in \[0, 1\]/);
    expect(() => studentTQuantile(Number.NaN, 3)).toThrow(RangeError);
    expect(() => studentTCdf(1, 0)).toThrow(/degrees of freedom must be positive/);
    expect(() => regularizedIncompleteBeta(2, 1, 1)).toThrow(RangeError);
  });
});
