/**
 * Dense matrix helpers on Float64Array.
 *
 * Storage order: COLUMN-MAJOR (as LAPACK, R and Fortran): entry (i, j) of an `rows x cols` matrix
 * lives at `data[i + j * rows]`. Column j is the contiguous slice `data[j*rows, (j+1)*rows)`, which
 * is what Householder QR and column operations want.
 *
 * A `Matrix` is a plain value `{ rows, cols, data }`. The fields are readonly by type; the
 * Float64Array itself cannot be frozen, so functions here promise never to write into an input and
 * always return new arrays unless a function says it writes into an `out` argument.
 *
 * Also here: error-free transformations (TwoSum, TwoProduct) and a compensated dot product, used by
 * OLS iterative refinement. Reference: T. Ogita, S. M. Rump and S. Oishi (2005), "Accurate sum and
 * dot product", SIAM J. Sci. Comput. 26(6), 1955-1988 (algorithms TwoSum, TwoProduct, Dot2);
 * T. J. Dekker (1971), "A floating-point technique for extending the available precision",
 * Numer. Math. 18, 224-242 (the splitting used by TwoProduct without FMA).
 */

/** Dense real matrix, column-major: entry (i, j) is `data[i + j * rows]`. */
export interface Matrix {
  readonly rows: number;
  readonly cols: number;
  readonly data: Float64Array;
}

function checkDimension(value: number, what: string): void {
  if (!Number.isInteger(value) || value < 0) throw new RangeError(`${what} must be a non-negative integer, got ${value}`);
}

/**
 * Create a matrix value. `data` (column-major, length rows*cols) is kept by reference, not copied;
 * without it the matrix is all zeros.
 * Throws RangeError when the length does not match.
 * Example: `createMatrix(2, 2, Float64Array.of(1, 3, 2, 4))` is [[1, 2], [3, 4]].
 */
export function createMatrix(rows: number, cols: number, data?: Float64Array): Matrix {
  checkDimension(rows, "rows");
  checkDimension(cols, "cols");
  const values = data ?? new Float64Array(rows * cols);
  if (values.length !== rows * cols) {
    throw new RangeError(`a ${rows} x ${cols} matrix needs ${rows * cols} values, got ${values.length}`);
  }
  return Object.freeze({ rows, cols, data: values });
}

/**
 * Matrix from an array of rows (row-major input, the natural way to type a matrix by hand).
 * Throws RangeError on ragged rows. Example: `matrixFromRows([[1, 2], [3, 4]]).data` is [1, 3, 2, 4].
 */
export function matrixFromRows(rowArrays: readonly (readonly number[])[]): Matrix {
  const rows = rowArrays.length;
  const cols = rows === 0 ? 0 : rowArrays[0].length;
  const data = new Float64Array(rows * cols);
  for (let i = 0; i < rows; i++) {
    const row = rowArrays[i];
    if (row.length !== cols) throw new RangeError(`row ${i} has ${row.length} values but row 0 has ${cols}`);
    for (let j = 0; j < cols; j++) data[i + j * rows] = row[j];
  }
  return createMatrix(rows, cols, data);
}

/**
 * Matrix from an array of columns (e.g. regressors held as separate series).
 * Throws RangeError when the columns differ in length.
 * Example: `matrixFromColumns([[1, 1], [2, 3]])` is [[1, 2], [1, 3]].
 */
export function matrixFromColumns(columns: readonly ArrayLike<number>[]): Matrix {
  const cols = columns.length;
  const rows = cols === 0 ? 0 : columns[0].length;
  const data = new Float64Array(rows * cols);
  for (let j = 0; j < cols; j++) {
    const column = columns[j];
    if (column.length !== rows) throw new RangeError(`column ${j} has ${column.length} values but column 0 has ${rows}`);
    for (let i = 0; i < rows; i++) data[i + j * rows] = column[i];
  }
  return createMatrix(rows, cols, data);
}

/** Entry (i, j), zero-based. Throws RangeError outside the matrix. */
export function getEntry(m: Matrix, i: number, j: number): number {
  if (i < 0 || i >= m.rows || j < 0 || j >= m.cols || !Number.isInteger(i) || !Number.isInteger(j)) {
    throw new RangeError(`entry (${i}, ${j}) is outside a ${m.rows} x ${m.cols} matrix`);
  }
  return m.data[i + j * m.rows];
}

/** A copy of column j. */
export function getColumn(m: Matrix, j: number): Float64Array {
  if (j < 0 || j >= m.cols || !Number.isInteger(j)) throw new RangeError(`column ${j} is outside a matrix with ${m.cols} columns`);
  return m.data.slice(j * m.rows, (j + 1) * m.rows);
}

/** The matrix as an array of row arrays (for printing and tests). */
export function toRowArrays(m: Matrix): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < m.rows; i++) {
    const row = new Array<number>(m.cols);
    for (let j = 0; j < m.cols; j++) row[j] = m.data[i + j * m.rows];
    out.push(row);
  }
  return out;
}

/** The n x n identity matrix. */
export function identity(n: number): Matrix {
  const m = createMatrix(n, n);
  for (let i = 0; i < n; i++) m.data[i + i * n] = 1;
  return m;
}

/** Transpose A'. */
export function transpose(a: Matrix): Matrix {
  const out = createMatrix(a.cols, a.rows);
  for (let j = 0; j < a.cols; j++) for (let i = 0; i < a.rows; i++) out.data[j + i * a.cols] = a.data[i + j * a.rows];
  return out;
}

/** Product A B. Throws RangeError when the inner dimensions differ. */
export function multiply(a: Matrix, b: Matrix): Matrix {
  if (a.cols !== b.rows) throw new RangeError(`cannot multiply ${a.rows} x ${a.cols} by ${b.rows} x ${b.cols}`);
  const out = createMatrix(a.rows, b.cols);
  const n = a.rows;
  for (let j = 0; j < b.cols; j++) {
    for (let l = 0; l < a.cols; l++) {
      const blj = b.data[l + j * b.rows];
      if (blj === 0) continue;
      const aOff = l * n;
      const oOff = j * n;
      for (let i = 0; i < n; i++) out.data[oOff + i] += a.data[aOff + i] * blj;
    }
  }
  return out;
}

/** Matrix-vector product A x, written into `out` when given. Throws RangeError on a size mismatch. */
export function multiplyVector(a: Matrix, x: ArrayLike<number>, out?: Float64Array): Float64Array {
  if (x.length !== a.cols) throw new RangeError(`matrix has ${a.cols} columns but the vector has ${x.length} values`);
  const result = out ?? new Float64Array(a.rows);
  if (result.length !== a.rows) throw new RangeError(`output needs ${a.rows} values, got ${result.length}`);
  result.fill(0);
  for (let j = 0; j < a.cols; j++) {
    const xj = x[j];
    if (xj === 0) continue;
    const off = j * a.rows;
    for (let i = 0; i < a.rows; i++) result[i] += a.data[off + i] * xj;
  }
  return result;
}

/** Cross product A'A (symmetric, cols x cols). */
export function crossProduct(a: Matrix): Matrix {
  const k = a.cols;
  const n = a.rows;
  const out = createMatrix(k, k);
  for (let j = 0; j < k; j++) {
    for (let l = 0; l <= j; l++) {
      let s = 0;
      for (let i = 0; i < n; i++) s += a.data[i + j * n] * a.data[i + l * n];
      out.data[j + l * k] = s;
      out.data[l + j * k] = s;
    }
  }
  return out;
}

/** Rows `rows[0..count)` of A, in that order (repeats allowed), as a new matrix. */
export function selectRows(a: Matrix, rows: ArrayLike<number>, count: number = rows.length): Matrix {
  const out = createMatrix(count, a.cols);
  for (let r = 0; r < count; r++) {
    const i = rows[r];
    if (!(i >= 0 && i < a.rows)) throw new RangeError(`row index ${i} is outside a matrix with ${a.rows} rows`);
  }
  for (let j = 0; j < a.cols; j++) {
    const src = j * a.rows;
    const dst = j * count;
    for (let r = 0; r < count; r++) out.data[dst + r] = a.data[src + rows[r]];
  }
  return out;
}

/** Dot product x'y of the first n values. */
export function dot(x: ArrayLike<number>, y: ArrayLike<number>, n: number = x.length): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += x[i] * y[i];
  return s;
}

/** Euclidean norm, scaled so that it neither overflows nor underflows (as LAPACK dnrm2). */
export function norm2(x: ArrayLike<number>, start = 0, end: number = x.length): number {
  let scale = 0;
  let ssq = 1;
  for (let i = start; i < end; i++) {
    const v = x[i];
    if (v !== 0) {
      const a = Math.abs(v);
      if (scale < a) {
        const r = scale / a;
        ssq = 1 + ssq * r * r;
        scale = a;
      } else {
        const r = a / scale;
        ssq += r * r;
      }
    }
  }
  return scale * Math.sqrt(ssq);
}

// ---------------------------------------------------------------------------------------------
// Error-free transformations and compensated arithmetic (Ogita, Rump & Oishi 2005)
// ---------------------------------------------------------------------------------------------

const SPLITTER = 134217729; // 2^27 + 1, Dekker/Veltkamp splitting for binary64

/** A value carried as an unevaluated sum hi + lo (double-double). */
export interface DoubleDouble {
  hi: number;
  lo: number;
}

/**
 * TwoSum (Knuth): a + b = s + e exactly, with s = fl(a + b). Writes {hi: s, lo: e} into `out`.
 * Reference: Ogita, Rump & Oishi (2005), Algorithm 3.1.
 */
export function twoSum(a: number, b: number, out: DoubleDouble): DoubleDouble {
  const s = a + b;
  const z = s - a;
  out.hi = s;
  out.lo = a - (s - z) + (b - z);
  return out;
}

/**
 * TwoProduct (Dekker): a * b = p + e exactly (barring underflow), with p = fl(a * b).
 * Reference: Ogita, Rump & Oishi (2005), Algorithm 3.3; Dekker (1971).
 */
export function twoProduct(a: number, b: number, out: DoubleDouble): DoubleDouble {
  const p = a * b;
  let t = SPLITTER * a;
  const ah = t - (t - a);
  const al = a - ah;
  t = SPLITTER * b;
  const bh = t - (t - b);
  const bl = b - bh;
  out.hi = p;
  out.lo = al * bl - (p - ah * bh - al * bh - ah * bl);
  return out;
}

/**
 * Accumulator for compensated sums of products: the result is as accurate as if computed in
 * twice the working precision and then rounded (Dot2 of Ogita, Rump & Oishi 2005, Algorithm 5.3).
 * Not exported as a class to keep the public surface small; see `compensatedDot`.
 */
class Dot2 {
  private s = 0;
  private c = 0;
  private readonly tp: DoubleDouble = { hi: 0, lo: 0 };
  private readonly ts: DoubleDouble = { hi: 0, lo: 0 };
  reset(): void {
    this.s = 0;
    this.c = 0;
  }
  addProduct(a: number, b: number): void {
    twoProduct(a, b, this.tp);
    twoSum(this.s, this.tp.hi, this.ts);
    this.s = this.ts.hi;
    this.c += this.ts.lo + this.tp.lo;
  }
  add(a: number): void {
    twoSum(this.s, a, this.ts);
    this.s = this.ts.hi;
    this.c += this.ts.lo;
  }
  value(): number {
    return this.s + this.c;
  }
}

/**
 * Compensated dot product x'y (Dot2): the error is about eps*|x'y| + eps^2 * cond, i.e. as if
 * computed in double-double and rounded. Reference: Ogita, Rump & Oishi (2005), Algorithm 5.3.
 * Example: `compensatedDot([1e16, 1, -1e16], [1, 1, 1])` is 1 (the plain dot gives 0).
 */
export function compensatedDot(x: ArrayLike<number>, y: ArrayLike<number>, n: number = x.length): number {
  const acc = new Dot2();
  for (let i = 0; i < n; i++) acc.addProduct(x[i], y[i]);
  return acc.value();
}

/**
 * Compensated residual r = y - A b (each entry computed with Dot2), written into `out`.
 * Coefficients that are NaN (aliased) are skipped, i.e. treated as zero.
 */
export function compensatedResidual(a: Matrix, b: ArrayLike<number>, y: ArrayLike<number>, out?: Float64Array): Float64Array {
  const n = a.rows;
  const result = out ?? new Float64Array(n);
  const acc = new Dot2();
  for (let i = 0; i < n; i++) {
    acc.reset();
    acc.add(y[i]);
    for (let j = 0; j < a.cols; j++) {
      const bj = b[j];
      if (Number.isNaN(bj)) continue;
      acc.addProduct(-a.data[i + j * n], bj);
    }
    result[i] = acc.value();
  }
  return result;
}

/**
 * Compensated A'r for the columns listed in `columns`, written into `out` (length columns.length).
 */
export function compensatedTransposeProduct(
  a: Matrix,
  r: ArrayLike<number>,
  columns: ArrayLike<number>,
  out: Float64Array,
): Float64Array {
  const n = a.rows;
  const acc = new Dot2();
  for (let c = 0; c < columns.length; c++) {
    const off = columns[c] * n;
    acc.reset();
    for (let i = 0; i < n; i++) acc.addProduct(a.data[off + i], r[i]);
    out[c] = acc.value();
  }
  return out;
}

/**
 * In-place Cholesky factorisation of a small symmetric positive definite k x k matrix held
 * column-major in `a` (only the lower triangle is read; L is written into it, A = L L').
 * Returns false (and leaves `a` partly overwritten) when a pivot is not positive or falls below
 * `relativeTolerance` times the original diagonal entry: the matrix is then treated as singular.
 */
export function choleskyInPlace(a: Float64Array, k: number, relativeTolerance = 1e-12): boolean {
  for (let j = 0; j < k; j++) {
    const diagOriginal = a[j + j * k];
    let d = diagOriginal;
    for (let l = 0; l < j; l++) d -= a[j + l * k] * a[j + l * k];
    if (!(d > relativeTolerance * diagOriginal) || !(d > 0)) return false;
    const ljj = Math.sqrt(d);
    a[j + j * k] = ljj;
    for (let i = j + 1; i < k; i++) {
      let s = a[i + j * k];
      for (let l = 0; l < j; l++) s -= a[i + l * k] * a[j + l * k];
      a[i + j * k] = s / ljj;
    }
  }
  return true;
}

/**
 * Solve L L' x = b in place (b overwritten by x) with the factor from `choleskyInPlace`.
 */
export function choleskySolveInPlace(l: Float64Array, k: number, b: Float64Array): void {
  for (let i = 0; i < k; i++) {
    let s = b[i];
    for (let j = 0; j < i; j++) s -= l[i + j * k] * b[j];
    b[i] = s / l[i + i * k];
  }
  for (let i = k - 1; i >= 0; i--) {
    let s = b[i];
    for (let j = i + 1; j < k; j++) s -= l[j + i * k] * b[j];
    b[i] = s / l[i + i * k];
  }
}
