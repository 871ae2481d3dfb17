import { describe, expect, it } from "vitest";
import {
  bootstrapOls,
  bootstrapPercentileIntervals,
  createPanelBlockBootstrap,
  defaultBlockLength,
  movingBlockBootstrap,
  movingBlockIndices,
} from "./bootstrap";
import { matrixFromColumns, selectRows } from "./linalg";
import { ols } from "./ols";
import { createRng } from "./random";

/** Split a resample into maximal runs of consecutive indices (wrapping allowed when circular). */
function runsOf(indices: ArrayLike<number>, n: number, circular: boolean): number[][] {
  const runs: number[][] = [[indices[0]]];
  for (let i = 1; i < indices.length; i++) {
    const prev = indices[i - 1];
    const next = circular ? (prev + 1) % n : prev + 1;
    if (indices[i] === next) runs[runs.length - 1].push(indices[i]);
    else runs.push([indices[i]]);
  }
  return runs;
}

describe("moving-block indices", () => {
  it("default block length round(T^(1/3)) (Politis & White 2004 rate, DOMAIN.md section 4)", () => {
    expect(defaultBlockLength(40)).toBe(3); // DOMAIN.md: 3-4 for T = 40-60
    expect(defaultBlockLength(60)).toBe(4);
    expect(defaultBlockLength(1)).toBe(1);
    expect(defaultBlockLength(100)).toBe(5);
    expect(() => defaultBlockLength(0)).toThrow(RangeError);
  });

  it("non-circular: blocks of b consecutive rows that never wrap, truncated to T", () => {
    const T = 23;
    const b = 4;
    const rng = createRng(3);
    for (let d = 0; d < 200; d++) {
      const idx = movingBlockIndices(T, rng, { blockLength: b });
      expect(idx.length).toBe(T);
      for (let start = 0; start < T; start += b) {
        const len = Math.min(b, T - start);
        for (let l = 1; l < len; l++) expect(idx[start + l]).toBe(idx[start] + l);
        expect(idx[start]).toBeLessThanOrEqual(T - b); // a block start leaves room for a whole block
      }
    }
  });

  it("circular: block starts cover 0..T-1 and blocks wrap around", () => {
    const T = 10;
    const rng = createRng(9);
    const starts = new Set<number>();
    let wrapped = false;
    for (let d = 0; d < 300; d++) {
      const idx = movingBlockIndices(T, rng, { blockLength: 3, circular: true });
      for (let start = 0; start < T; start += 3) {
        starts.add(idx[start]);
        const len = Math.min(3, T - start);
        for (let l = 1; l < len; l++) {
          expect(idx[start + l]).toBe((idx[start] + l) % T);
          if (idx[start + l] === 0) wrapped = true;
        }
      }
    }
    expect(starts.size).toBe(T);
    expect(wrapped).toBe(true);
  });

  it("is reproducible and identical across movingBlockIndices and movingBlockBootstrap", () => {
    const many = movingBlockBootstrap(17, 5, createRng(21), { blockLength: 3 });
    const rng = createRng(21);
    for (let d = 0; d < 5; d++) {
      expect(Array.from(movingBlockIndices(17, rng, { blockLength: 3 }))).toEqual(Array.from(many.subarray(d * 17, (d + 1) * 17)));
    }
    expect(runsOf(many.subarray(0, 17), 17, false).every((run) => run.length >= 1)).toBe(true);
  });

  it("every start is about equally likely (chi-square, fixed seed)", () => {
    const T = 12;
    const b = 3;
    const counts = new Array<number>(T - b + 1).fill(0);
    const rng = createRng(5);
    const draws = 4000;
    for (let d = 0; d < draws; d++) {
      const idx = movingBlockIndices(T, rng, { blockLength: b });
      for (let start = 0; start < T; start += b) counts[idx[start]]++;
    }
    const expected = (draws * (T / b)) / counts.length;
    const chi2 = counts.reduce((s, c) => s + (c - expected) ** 2 / expected, 0);
    expect(chi2).toBeLessThan(27.9); // 9 df, P(chi2 > 27.9) < 0.001 (common practice)
  });

  it("throws on misuse", () => {
    expect(() => movingBlockIndices(5, createRng(1), { blockLength: 6 })).toThrow(/exceeds the 5 observations/);
    expect(() => movingBlockIndices(5, createRng(1), { blockLength: 0 })).toThrow(/positive integer/);
    expect(() => movingBlockIndices(5, createRng(1), {}, new Int32Array(3))).toThrow(/holds 3/);
  });
});

function smallProblem(seed: number, rows = 40) {
  const rng = createRng(seed);
  const ones: number[] = [];
  const lnR: number[] = [];
  const lnA: number[] = [];
  const y: number[] = [];
  let r = 11;
  let a = 0.1;
  for (let t = 0; t < rows; t++) {
    r += 0.03 + 0.02 * rng.nextNormal();
    a += 0.015 + 0.01 * rng.nextNormal();
    ones.push(1);
    lnR.push(r);
    lnA.push(a);
    y.push(-9 + 0.5 * r - 0.6 * a + 0.3 * rng.nextNormal());
  }
  return { design: matrixFromColumns([ones, lnR, lnA]), y: Float64Array.from(y) };
}

describe("bootstrapOls (fast path)", () => {
  it("equals an explicit QR refit on the same resampled rows (same seed), both block variants", () => {
    const { design, y } = smallProblem(1);
    for (const circular of [false, true]) {
      const draws = 50;
      const fast = bootstrapOls(design, y, { draws, rng: createRng(99), circular });
      const rng = createRng(99);
      const idx = new Int32Array(40);
      for (let d = 0; d < draws; d++) {
        movingBlockIndices(40, rng, { circular }, idx);
        const refit = ols(selectRows(design, idx), Float64Array.from(idx, (i) => y[i]));
        for (let j = 0; j < 3; j++) {
          const fastValue = fast.coefficients[d * 3 + j];
          expect(Math.abs(fastValue - refit.coefficients[j]) / Math.abs(refit.coefficients[j])).toBeLessThan(1e-9);
        }
      }
    }
  });

  it("the general loop (two and four columns, no constant) equals QR refits as the three-column path does", () => {
    const { design, y } = smallProblem(5);
    const cols = (j: number) => Array.from(design.data.subarray(j * 40, (j + 1) * 40));
    const extra = cols(1).map((v, i) => v * v - 0.01 * i); // a fourth column, not collinear
    const designs = [matrixFromColumns([cols(1), cols(2)]), matrixFromColumns([cols(0), cols(1), cols(2), extra])];
    for (const X of designs) {
      const k = X.cols;
      const fast = bootstrapOls(X, y, { draws: 40, rng: createRng(17) });
      const rng = createRng(17);
      const idx = new Int32Array(40);
      for (let d = 0; d < 40; d++) {
        movingBlockIndices(40, rng, {}, idx);
        const refit = ols(selectRows(X, idx), Float64Array.from(idx, (i) => y[i]));
        for (let j = 0; j < k; j++) {
          expect(Math.abs(fast.coefficients[d * k + j] - refit.coefficients[j]) / Math.abs(refit.coefficients[j]), `${k} columns, draw ${d}`).toBeLessThan(1e-8);
        }
      }
    }
  });

  it("is reproducible, reports its settings, and gives sensible percentile intervals", () => {
    const { design, y } = smallProblem(2);
    const a = bootstrapOls(design, y, { draws: 299, rng: createRng(7), names: ["lnB", "gamma", "thetaMinus1"] });
    const b = bootstrapOls(design, y, { draws: 299, rng: createRng(7) });
    expect(Array.from(a.coefficients)).toEqual(Array.from(b.coefficients));
    expect(a.blockLength).toBe(3);
    expect(a.circular).toBe(false);
    expect(a.failedDraws).toBe(0);
    expect(a.names).toEqual(["lnB", "gamma", "thetaMinus1"]);
    const fit = ols(design, y);
    const intervals = bootstrapPercentileIntervals(a, 0.95);
    intervals.forEach((row, j) => {
      expect(row.lower).toBeLessThan(row.upper);
      expect(row.validDraws).toBe(299);
      // the point estimate lies inside a wide (99.9%) bootstrap interval
      const wide = bootstrapPercentileIntervals(a, 0.999)[j];
      expect(fit.coefficients[j]).toBeGreaterThan(wide.lower);
      expect(fit.coefficients[j]).toBeLessThan(wide.upper);
    });
  });

  it("marks singular draws as NaN with a warning", () => {
    // Column 2 is non-zero only in row 0: most resamples miss it and are singular.
    const design = matrixFromColumns([
      [1, 1, 1, 1, 1, 1, 1, 1],
      [5, 0, 0, 0, 0, 0, 0, 0],
    ]);
    const result = bootstrapOls(design, Float64Array.of(1, 2, 3, 4, 5, 6, 7, 8), { draws: 50, rng: createRng(4), blockLength: 2 });
    expect(result.failedDraws).toBeGreaterThan(0);
    expect(result.warnings[0].code).toBe("failed-draws");
    expect(bootstrapPercentileIntervals(result)[1].validDraws).toBe(50 - result.failedDraws);
    // The same with three columns (the written-out path): the NaN draws are exactly the singular ones.
    const three = matrixFromColumns([
      [1, 1, 1, 1, 1, 1, 1, 1],
      [1, 2, 3, 4, 5, 6, 7, 8],
      [5, 0, 0, 0, 0, 0, 0, 0],
    ]);
    const r3 = bootstrapOls(three, Float64Array.of(1, 2, 3, 4, 5, 6, 7, 8), { draws: 50, rng: createRng(4), blockLength: 2 });
    const rng = createRng(4);
    const idx = new Int32Array(8);
    let singular = 0;
    for (let d = 0; d < 50; d++) {
      movingBlockIndices(8, rng, { blockLength: 2 }, idx);
      const hasRow0 = idx.includes(0);
      if (!hasRow0) singular++;
      expect(Number.isNaN(r3.coefficients[d * 3]), `draw ${d}`).toBe(!hasRow0);
    }
    expect(r3.failedDraws).toBe(singular);
  });

  it("percentile intervals use R's type-7 quantiles", () => {
    // draws 1..99: type 7 quantile at 0.05 is 1 + 0.05 * 98 = 5.9, at 0.95 is 94.1 (hand-derived)
    const values = Float64Array.from({ length: 99 }, (_, i) => 99 - i);
    const result = { coefficients: values, draws: 99, columns: 1, names: ["x"], blockLength: 1, circular: false, failedDraws: 0, warnings: [] };
    const [row] = bootstrapPercentileIntervals(result, 0.9);
    expect(row.lower).toBeCloseTo(5.9, 12);
    expect(row.upper).toBeCloseTo(94.1, 12);
  });
});

describe("panel block bootstrap", () => {
  // 3 economies; X2 lacks 2001; rows deliberately not sorted.
  const groups = ["X1", "X1", "X1", "X1", "X2", "X2", "X2", "X3", "X3", "X3", "X3"];
  const periods = [2000, 2001, 2002, 2003, 2003, 2000, 2002, 2000, 2001, 2002, 2003];

  it("common-periods: the same periods are drawn for every economy", () => {
    const bootstrap = createPanelBlockBootstrap({ groups, periods }, { scheme: "common-periods", blockLength: 2 });
    const out = new Int32Array(bootstrap.maxRows);
    const rng = createRng(8);
    for (let d = 0; d < 50; d++) {
      const count = bootstrap.draw(rng, out);
      const rows = Array.from(out.subarray(0, count));
      const periodsOf = (g: string) => rows.filter((r) => groups[r] === g).map((r) => periods[r]);
      expect(periodsOf("X1")).toEqual(periodsOf("X3")); // balanced economies get identical periods
      expect(periodsOf("X2")).toEqual(periodsOf("X1").filter((p) => p !== 2001)); // X2 has no 2001
    }
  });

  it("within-group: each economy keeps its size and is resampled from its own rows in period order", () => {
    const bootstrap = createPanelBlockBootstrap({ groups, periods }, { scheme: "within-group", blockLength: 2 });
    const out = new Int32Array(bootstrap.maxRows);
    const rng = createRng(8);
    for (let d = 0; d < 50; d++) {
      const count = bootstrap.draw(rng, out);
      expect(count).toBe(groups.length);
      const rows = Array.from(out.subarray(0, count));
      for (const g of ["X1", "X2", "X3"]) {
        expect(rows.filter((r) => groups[r] === g)).toHaveLength(groups.filter((x) => x === g).length);
      }
      // X1 rows are the first 4 of the output; blocks of 2 are consecutive years
      expect(periods[rows[1]] - periods[rows[0]]).toBe(1);
    }
  });

  it("throws on misuse", () => {
    expect(() => createPanelBlockBootstrap({ groups: ["a"], periods: [1, 2] }, { scheme: "within-group" })).toThrow(/1 group labels but 2 periods/);
    expect(() => createPanelBlockBootstrap({ groups, periods }, { scheme: "by-year" as "within-group" })).toThrow(/unknown panel bootstrap scheme/);
    const bootstrap = createPanelBlockBootstrap({ groups, periods }, { scheme: "common-periods" });
    expect(() => bootstrap.draw(createRng(1), new Int32Array(2))).toThrow(/output holds 2 rows/);
  });
});
