import { describe, expect, it } from "vitest";
import { matrixFromColumns, matrixFromRows } from "./linalg";
import { applyQ, applyQTranspose, householderQr, leastSquaresSolve, leverages, unscaledCovariance } from "./qr";

describe("householderQr", () => {
  const x = matrixFromRows([
    [1, 0],
    [1, 1],
    [1, 2],
  ]);

  it("Q is orthogonal and Q'X has R on top and zeros below", () => {
    const qr = householderQr(x);
    expect(qr.rank).toBe(2);
    // Q'Q e = e for a few vectors
    for (const v of [[1, 0, 0], [0.3, -2, 5]]) {
      const back = applyQ(qr, applyQTranspose(qr, v));
      v.forEach((value, i) => expect(back[i]).toBeCloseTo(value, 14));
    }
    // Columns of Q'X: upper triangular (scaled columns: Xs = X diag(1/s))
    for (let j = 0; j < 2; j++) {
      const col = Array.from({ length: 3 }, (_, i) => x.data[i + j * 3] / qr.scale[j]);
      const qtc = applyQTranspose(qr, col);
      for (let i = j + 1; i < 3; i++) expect(Math.abs(qtc[i])).toBeLessThan(1e-15);
      expect(Math.abs(qtc[j])).toBeCloseTo(Math.abs(qr.factors[j + j * 3]), 14);
    }
  });

  it("solves least squares and gives (X'X)^-1 from R (hand-derived)", () => {
    // y = (1, 3, 4): b = (7/6, 3/2); (X'X)^-1 = [5/6 -1/2; -1/2 1/2]
    const qr = householderQr(x);
    const s = leastSquaresSolve(qr, x, [1, 3, 4]);
    expect(s.coefficients[0]).toBeCloseTo(7 / 6, 15);
    expect(s.coefficients[1]).toBeCloseTo(3 / 2, 15);
    expect(Array.from(s.fitted).map((v, i) => v + s.residuals[i])).toEqual([1, 3, 4].map((v) => expect.closeTo(v, 15)));
    const bread = unscaledCovariance(qr);
    expect(Array.from(bread.data)).toEqual([5 / 6, -1 / 2, -1 / 2, 1 / 2].map((v) => expect.closeTo(v, 14)));
    // leverages h = diag(X (X'X)^-1 X') = (5/6, 1/3, 5/6), sum = rank
    expect(Array.from(leverages(qr))).toEqual([5 / 6, 1 / 3, 5 / 6].map((v) => expect.closeTo(v, 14)));
  });

  it("limited pivoting moves an aliased column to the end and keeps the others in order", () => {
    const a = matrixFromColumns([
      [1, 1, 1, 1],
      [2, 4, 6, 8], // = 2 * trend
      [1, 2, 3, 4],
      [0, 1, 0, 1],
    ]);
    const qr = householderQr(a);
    expect(qr.rank).toBe(3);
    expect(Array.from(qr.pivot)).toEqual([0, 1, 3, 2]);
    expect(qr.aliased).toEqual([false, false, true, false]);
    const greedy = householderQr(a, { pivoting: "greedy" });
    expect(greedy.rank).toBe(3);
    expect(greedy.aliased.filter(Boolean)).toHaveLength(1);
  });

  it("handles zero columns, more columns than rows and the tolerance bounds", () => {
    const zero = householderQr(matrixFromColumns([[0, 0, 0], [1, 2, 3]]));
    expect(zero.rank).toBe(1);
    expect(zero.aliased).toEqual([true, false]);
    const wide = householderQr(matrixFromRows([[1, 2, 3], [4, 5, 7]]));
    expect(wide.rank).toBe(2);
    expect(wide.aliased).toEqual([false, false, true]);
    expect(() => householderQr(x, { tolerance: 1 })).toThrow(/rank tolerance/);
    expect(() => householderQr(matrixFromRows([[Number.NaN]]))).toThrow(/not finite/);
  });

  it("the rank tolerance decides near-collinearity: sine of the angle to earlier columns", () => {
    // Column 2 = column 1 + 1e-9 * e1: its orthogonal part relative to its norm is about 1e-9 / 2.
    const c1 = [1, 1, 1, 1];
    const c2 = [1 + 1e-9, 1, 1, 1];
    expect(householderQr(matrixFromColumns([c1, c2])).rank).toBe(2); // default 1e-11
    expect(householderQr(matrixFromColumns([c1, c2]), { tolerance: 1e-7 }).rank).toBe(1); // R lm's 1e-7
  });
});
