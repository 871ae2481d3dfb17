import { describe, expect, it } from "vitest";
import {
  choleskyInPlace,
  choleskySolveInPlace,
  compensatedDot,
  compensatedResidual,
  createMatrix,
  crossProduct,
  getColumn,
  getEntry,
  identity,
  matrixFromColumns,
  matrixFromRows,
  multiply,
  multiplyVector,
  norm2,
  selectRows,
  toRowArrays,
  transpose,
  twoProduct,
  twoSum,
} from "./linalg";

describe("linalg: column-major dense matrices", () => {
  it("stores column-major and converts both ways", () => {
    const m = matrixFromRows([
      [1, 2, 3],
      [4, 5, 6],
    ]);
    expect(Array.from(m.data)).toEqual([1, 4, 2, 5, 3, 6]);
    expect(getEntry(m, 1, 2)).toBe(6);
    expect(Array.from(getColumn(m, 1))).toEqual([2, 5]);
    expect(toRowArrays(m)).toEqual([
      [1, 2, 3],
      [4, 5, 6],
    ]);
    expect(toRowArrays(matrixFromColumns([[1, 4], [2, 5], [3, 6]]))).toEqual(toRowArrays(m));
    expect(toRowArrays(transpose(m))).toEqual([
      [1, 4],
      [2, 5],
      [3, 6],
    ]);
  });

  it("multiplies (hand-derived)", () => {
    const a = matrixFromRows([
      [1, 2],
      [3, 4],
    ]);
    const b = matrixFromRows([
      [5, 6],
      [7, 8],
    ]);
    expect(toRowArrays(multiply(a, b))).toEqual([
      [19, 22],
      [43, 50],
    ]);
    expect(Array.from(multiplyVector(a, [1, -1]))).toEqual([-1, -1]);
    expect(toRowArrays(crossProduct(a))).toEqual([
      [10, 14],
      [14, 20],
    ]);
    expect(toRowArrays(multiply(identity(2), a))).toEqual(toRowArrays(a));
    expect(toRowArrays(selectRows(a, [1, 1, 0]))).toEqual([
      [3, 4],
      [3, 4],
      [1, 2],
    ]);
  });

  it("norm2 does not overflow or underflow", () => {
    expect(norm2([3, 4])).toBe(5);
    expect(norm2([3e300, 4e300])).toBeCloseTo(5e300, -285);
    expect(norm2([3e-300, 4e-300]) / 5e-300).toBeCloseTo(1, 14);
  });

  it("error-free transformations are exact", () => {
    const s = twoSum(1, 1e-17, { hi: 0, lo: 0 });
    expect(s).toEqual({ hi: 1, lo: 1e-17 });
    const p = twoProduct(1 + 2 ** -30, 1 + 2 ** -30, { hi: 0, lo: 0 });
    expect(p.hi).toBe(1 + 2 ** -29);
    expect(p.lo).toBe(2 ** -60);
  });

  it("compensated dot product survives cancellation (Ogita, Rump & Oishi 2005)", () => {
    expect(compensatedDot([1e16, 1, -1e16], [1, 1, 1])).toBe(1);
    expect([1e16, 1, -1e16].reduce((s, v) => s + v, 0)).toBe(0); // the plain sum loses it
    const r = compensatedResidual(matrixFromRows([[1e16, 1]]), [1, 1], [1e16 + 4]);
    expect(r[0]).toBe(1e16 + 4 - 1e16 - 1);
  });

  it("Cholesky factorises and solves a small SPD system (hand-derived)", () => {
    // A = [4 2; 2 3] = L L', L = [2 0; 1 sqrt(2)]; A x = (2, 1) gives x = (0.5, 0)
    const a = Float64Array.of(4, 2, 2, 3);
    expect(choleskyInPlace(a, 2)).toBe(true);
    expect(a[0]).toBe(2);
    expect(a[1]).toBe(1);
    expect(a[3]).toBeCloseTo(Math.SQRT2, 15);
    const b = Float64Array.of(2, 1);
    choleskySolveInPlace(a, 2, b);
    expect(b[0]).toBeCloseTo(0.5, 15);
    expect(b[1]).toBeCloseTo(0, 15);
    expect(choleskyInPlace(Float64Array.of(1, 1, 1, 1), 2)).toBe(false); // singular
  });

  it("throws on misuse", () => {
    expect(() => createMatrix(2, 2, new Float64Array(3))).toThrow(/needs 4 values, got 3/);
    expect(() => matrixFromRows([[1, 2], [3]])).toThrow(/row 1 has 1 values but row 0 has 2/);
    expect(() => multiply(identity(2), identity(3))).toThrow(/cannot multiply/);
    expect(() => getEntry(identity(2), 2, 0)).toThrow(RangeError);
  });
});
