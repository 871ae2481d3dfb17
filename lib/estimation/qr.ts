/**
 * Householder QR with column equilibration and column pivoting, plus the least-squares solve and
 * the unscaled covariance (X'X)^-1 computed from R.
 *
 * What is factorised: Xs P = Q R, where Xs = X diag(1/s) has every column scaled to unit
 * Euclidean norm (s_j = ||x_j||; a zero column keeps s_j = 1), P is the column permutation in
 * `pivot`, Q is the product of `rank` Householder reflections H_k = I - tau_k v_k v_k' and R is upper
 * triangular (rank x rank block R11 in the leading corner). Scaling first makes the rank decision
 * independent of the units of the regressors; Householder QR itself is column-scaling invariant.
 *
 * Rank decision ("a stated tolerance"): a column is ALIASED when the norm of its part orthogonal to
 * the columns already taken is at most `tolerance` times its own norm (= 1 after scaling), i.e.
 * the sine of its angle to their span is <= tolerance. Default tolerance 1e-11 (see
 * DEFAULT_RANK_TOLERANCE). Two pivoting rules:
 *  - "limited" (default): columns are taken in their given order and an aliased column is moved to
 *    the end, as R's LINPACK dqrdc2 used by lm(); the LATER of two collinear columns is reported
 *    aliased, as R does. R's lm uses tolerance 1e-7, which declares NIST Filip rank deficient: its
 *    x^10 column has sine 5.2e-8 to the span of 1, x, ..., x^9 (measured here), 3.7 orders above
 *    our default, while exactly collinear columns give about 1e-16.
 *  - "greedy": at each step the column with the largest remaining norm is taken (Businger & Golub
 *    1965; LAPACK dgeqp3); the factorisation is then rank revealing in the usual sense.
 *
 * Reference: G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed. (2013), sections 5.2
 * (Householder QR), 5.4.2 (QR with column pivoting), 5.3 (least squares); P. Businger and
 * G. H. Golub (1965), "Linear least squares solutions by Householder transformations", Numer. Math.
 * 7, 269-276; A. Björck (1967), "Iterative refinement of linear least squares solutions I", BIT 7,
 * 257-278 (the refinement of the augmented system used in `leastSquaresSolve`).
 */
import {
  type Matrix,
  compensatedResidual,
  compensatedTransposeProduct,
  createMatrix,
  norm2,
} from "./linalg";

/** Default rank tolerance: sine of the angle between a column and the span of the earlier ones. */
export const DEFAULT_RANK_TOLERANCE = 1e-11;

export type PivotingRule = "limited" | "greedy";

/** A pivoted Householder QR factorisation (see the module comment for the exact definition). */
export interface QrDecomposition {
  readonly rows: number;
  readonly cols: number;
  /** rows x cols column-major: R on and above the diagonal, Householder vectors below (v_k0 = 1 implicit). */
  readonly factors: Float64Array;
  /** Householder scalars tau_k, k < rank. */
  readonly tau: Float64Array;
  /** pivot[j] = original index of the column in position j; positions >= rank are aliased columns. */
  readonly pivot: Int32Array;
  /** Column scale s_j by ORIGINAL column index (Euclidean norm of column j, 1 for a zero column). */
  readonly scale: Float64Array;
  /** Numerical rank: number of columns kept. */
  readonly rank: number;
  /** aliased[j] is true when ORIGINAL column j was found (numerically) in the span of others. */
  readonly aliased: readonly boolean[];
  readonly tolerance: number;
  readonly pivoting: PivotingRule;
}

export interface QrOptions {
  /** Rank tolerance (see module comment). Default DEFAULT_RANK_TOLERANCE = 1e-11. */
  readonly tolerance?: number;
  /** Pivoting rule, default "limited" (R lm's choice of which columns are aliased). */
  readonly pivoting?: PivotingRule;
}

/**
 * Householder QR with column equilibration and pivoting of an n x p matrix (any n, p).
 * Throws RangeError for a non-finite entry or a tolerance outside [0, 1).
 * Example: `householderQr(matrixFromRows([[1, 1], [1, 2], [1, 3]])).rank` is 2;
 * with columns [1, 2, 3] and [2, 4, 6] the rank is 1 and `aliased` is [false, true].
 * Reference: Golub & Van Loan (2013), Algorithm 5.4.1 (QR with column pivoting).
 */
export function householderQr(x: Matrix, options: QrOptions = {}): QrDecomposition {
  const tolerance = options.tolerance ?? DEFAULT_RANK_TOLERANCE;
  const pivoting = options.pivoting ?? "limited";
  if (!(tolerance >= 0 && tolerance < 1)) throw new RangeError(`rank tolerance must be in [0, 1), got ${tolerance}`);
  if (pivoting !== "limited" && pivoting !== "greedy") throw new RangeError(`unknown pivoting rule "${String(pivoting)}"`);
  const n = x.rows;
  const p = x.cols;
  const a = new Float64Array(n * p);
  const scale = new Float64Array(p);
  for (let j = 0; j < p; j++) {
    for (let i = 0; i < n; i++) {
      const v = x.data[i + j * n];
      if (!Number.isFinite(v)) throw new RangeError(`matrix entry (${i}, ${j}) is not finite: ${v}`);
    }
    const s = norm2(x.data, j * n, (j + 1) * n);
    scale[j] = s > 0 ? s : 1;
    const inv = 1 / scale[j];
    for (let i = 0; i < n; i++) a[i + j * n] = x.data[i + j * n] * inv;
  }
  const originalNorm = new Float64Array(p);
  for (let j = 0; j < p; j++) originalNorm[j] = norm2(a, j * n, (j + 1) * n);

  const pivot = new Int32Array(p);
  for (let j = 0; j < p; j++) pivot[j] = j;
  const tau = new Float64Array(Math.min(n, p));
  const columnBuffer = new Float64Array(n);

  const swapColumns = (c1: number, c2: number): void => {
    if (c1 === c2) return;
    for (let i = 0; i < n; i++) {
      const t = a[i + c1 * n];
      a[i + c1 * n] = a[i + c2 * n];
      a[i + c2 * n] = t;
    }
    const tp = pivot[c1];
    pivot[c1] = pivot[c2];
    pivot[c2] = tp;
    const tn = originalNorm[c1];
    originalNorm[c1] = originalNorm[c2];
    originalNorm[c2] = tn;
  };
  // Move column c to the end (positions c+1..p-1 shift left): keeps the given order of the rest.
  const moveToEnd = (c: number): void => {
    if (c === p - 1) return;
    columnBuffer.set(a.subarray(c * n, (c + 1) * n));
    const pc = pivot[c];
    const nc = originalNorm[c];
    a.copyWithin(c * n, (c + 1) * n, p * n);
    a.set(columnBuffer, (p - 1) * n);
    for (let j = c; j < p - 1; j++) {
      pivot[j] = pivot[j + 1];
      originalNorm[j] = originalNorm[j + 1];
    }
    pivot[p - 1] = pc;
    originalNorm[p - 1] = nc;
  };

  let k = 0;
  let last = p; // columns [last, p) are aliased
  while (k < Math.min(n, last)) {
    if (pivoting === "greedy") {
      let best = k;
      let bestNorm = -1;
      for (let j = k; j < last; j++) {
        const r = originalNorm[j] > 0 ? norm2(a, k + j * n, (j + 1) * n) / originalNorm[j] : 0;
        if (r > bestNorm) {
          bestNorm = r;
          best = j;
        }
      }
      if (bestNorm <= tolerance) break; // every remaining column is aliased
      swapColumns(k, best);
    } else {
      const remaining = norm2(a, k + k * n, (k + 1) * n);
      if (!(remaining > tolerance * originalNorm[k]) || originalNorm[k] === 0) {
        moveToEnd(k);
        last--;
        continue;
      }
    }
    // Householder reflection annihilating a[k+1:n, k] (LAPACK dlarfg convention).
    const kk = k + k * n;
    const alpha = a[kk];
    const xnorm = norm2(a, kk + 1, (k + 1) * n);
    if (xnorm === 0) {
      tau[k] = 0;
    } else {
      const beta = -Math.sign(alpha || 1) * Math.hypot(alpha, xnorm);
      tau[k] = (beta - alpha) / beta;
      const inv = 1 / (alpha - beta);
      for (let i = k + 1; i < n; i++) a[i + k * n] *= inv;
      a[kk] = beta;
      // Apply H_k to the remaining columns (aliased ones included, so Q'X stays complete).
      for (let j = k + 1; j < p; j++) {
        const off = j * n;
        let w = a[k + off];
        for (let i = k + 1; i < n; i++) w += a[i + k * n] * a[i + off];
        w *= tau[k];
        a[k + off] -= w;
        for (let i = k + 1; i < n; i++) a[i + off] -= w * a[i + k * n];
      }
    }
    k++;
  }
  const rank = k;
  const aliased = new Array<boolean>(p).fill(false);
  for (let j = rank; j < p; j++) aliased[pivot[j]] = true;
  return Object.freeze({
    rows: n,
    cols: p,
    factors: a,
    tau: tau.slice(0, rank),
    pivot,
    scale,
    rank,
    aliased: Object.freeze(aliased),
    tolerance,
    pivoting,
  });
}

/** Q'y (length n), written into `out` when given. */
export function applyQTranspose(qr: QrDecomposition, y: ArrayLike<number>, out?: Float64Array): Float64Array {
  const n = qr.rows;
  if (y.length !== n) throw new RangeError(`QR has ${n} rows but the vector has ${y.length} values`);
  const z = out ?? new Float64Array(n);
  if (z !== y) for (let i = 0; i < n; i++) z[i] = y[i];
  const a = qr.factors;
  for (let k = 0; k < qr.rank; k++) {
    const t = qr.tau[k];
    if (t === 0) continue;
    let w = z[k];
    for (let i = k + 1; i < n; i++) w += a[i + k * n] * z[i];
    w *= t;
    z[k] -= w;
    for (let i = k + 1; i < n; i++) z[i] -= w * a[i + k * n];
  }
  return z;
}

/** Q z (length n), written into `out` when given. */
export function applyQ(qr: QrDecomposition, zIn: ArrayLike<number>, out?: Float64Array): Float64Array {
  const n = qr.rows;
  if (zIn.length !== n) throw new RangeError(`QR has ${n} rows but the vector has ${zIn.length} values`);
  const z = out ?? new Float64Array(n);
  if (z !== zIn) for (let i = 0; i < n; i++) z[i] = zIn[i];
  const a = qr.factors;
  for (let k = qr.rank - 1; k >= 0; k--) {
    const t = qr.tau[k];
    if (t === 0) continue;
    let w = z[k];
    for (let i = k + 1; i < n; i++) w += a[i + k * n] * z[i];
    w *= t;
    z[k] -= w;
    for (let i = k + 1; i < n; i++) z[i] -= w * a[i + k * n];
  }
  return z;
}

/** Solve R11 z = b (in place on the first `rank` entries of b). */
function solveR(qr: QrDecomposition, b: Float64Array): void {
  const n = qr.rows;
  const a = qr.factors;
  for (let i = qr.rank - 1; i >= 0; i--) {
    let s = b[i];
    for (let j = i + 1; j < qr.rank; j++) s -= a[i + j * n] * b[j];
    b[i] = s / a[i + i * n];
  }
}

/** Solve R11' h = g (in place on the first `rank` entries of g). */
function solveRTranspose(qr: QrDecomposition, g: Float64Array): void {
  const n = qr.rows;
  const a = qr.factors;
  for (let i = 0; i < qr.rank; i++) {
    let s = g[i];
    for (let j = 0; j < i; j++) s -= a[j + i * n] * g[j];
    g[i] = s / a[i + i * n];
  }
}

export interface LeastSquaresSolution {
  /** Coefficients by original column; NaN for aliased columns. */
  readonly coefficients: Float64Array;
  /** y - X b, each entry computed with compensated (double-double) arithmetic. */
  readonly residuals: Float64Array;
  /** X b, each entry computed with compensated arithmetic. */
  readonly fitted: Float64Array;
  /** Refinement steps actually taken. */
  readonly refinementSteps: number;
}

/**
 * Least-squares solution of min ||y - X b|| from the QR of X, followed by up to `refinementSteps`
 * steps of iterative refinement of the augmented system [I X; X' 0][r; b] = [y; 0] (Björck 1967),
 * with the residuals f = y - r - X b and g = -X'r accumulated in compensated arithmetic (Dot2).
 * Aliased coefficients are NaN (the basic solution with them set to zero).
 * Throws RangeError when X or y does not match the factorisation.
 * Reference: Björck (1967); Golub & Van Loan (2013), section 5.3.
 */
export function leastSquaresSolve(
  qr: QrDecomposition,
  x: Matrix,
  y: ArrayLike<number>,
  refinementSteps = 3,
): LeastSquaresSolution {
  const n = qr.rows;
  const p = qr.cols;
  const r = qr.rank;
  if (x.rows !== n || x.cols !== p) throw new RangeError(`X is ${x.rows} x ${x.cols} but the QR is of a ${n} x ${p} matrix`);
  if (y.length !== n) throw new RangeError(`X has ${n} rows but y has ${y.length}`);
  const kept = qr.pivot.subarray(0, r);
  const coefficients = new Float64Array(p).fill(Number.NaN);

  // Basic solution: z = R11^-1 (Q'y)[0:r], b_pivot[j] = z_j / s_pivot[j].
  const qty = applyQTranspose(qr, y);
  solveR(qr, qty);
  for (let j = 0; j < r; j++) coefficients[kept[j]] = qty[j] / qr.scale[kept[j]];

  const residual = compensatedResidual(x, coefficients, y);
  let steps = 0;
  if (r > 0) {
    const f = new Float64Array(n);
    const g = new Float64Array(r);
    const d = new Float64Array(n);
    for (; steps < refinementSteps; steps++) {
      // f = y - r - X b, computed as (y - X b) - r with y - X b compensated.
      compensatedResidual(x, coefficients, y, f);
      for (let i = 0; i < n; i++) f[i] -= residual[i];
      // g = -X'r in scaled coordinates: -(X diag(1/s))' r.
      compensatedTransposeProduct(x, residual, kept, g);
      for (let j = 0; j < r; j++) g[j] = -g[j] / qr.scale[kept[j]];
      // h = R11^-T g; d = Q'f; dz = R11^-1 (d1 - h); dr = Q [h; d2].
      solveRTranspose(qr, g);
      applyQTranspose(qr, f, d);
      const dz = new Float64Array(n);
      for (let j = 0; j < r; j++) dz[j] = d[j] - g[j];
      solveR(qr, dz);
      // Converged when no coefficient moves by more than half a unit in its last place.
      let moved = false;
      for (let j = 0; j < r; j++) {
        const c = kept[j];
        const delta = dz[j] / qr.scale[c];
        if (Math.abs(delta) > 2 ** -53 * Math.abs(coefficients[c])) moved = true;
        coefficients[c] += delta;
      }
      for (let j = 0; j < r; j++) d[j] = g[j];
      applyQ(qr, d, d);
      for (let i = 0; i < n; i++) residual[i] += d[i];
      if (!moved) {
        steps++;
        break;
      }
    }
  }
  const residuals = compensatedResidual(x, coefficients, y);
  const fitted = new Float64Array(n);
  const zero = new Float64Array(n);
  compensatedResidual(x, coefficients, zero, fitted);
  for (let i = 0; i < n; i++) fitted[i] = -fitted[i];
  return { coefficients, residuals, fitted, refinementSteps: steps };
}

/**
 * The unscaled covariance ("bread") (X'X)^-1, p x p by original column order, computed from R as
 * diag(1/s) P R11^-1 R11^-T P' diag(1/s) without ever forming X'X. Rows and columns of aliased
 * columns are NaN (the inverse of the kept block is returned for the rest, as R's
 * summary.lm()$cov.unscaled does for the non-aliased coefficients).
 * Reference: Golub & Van Loan (2013), section 5.3 ((X'X)^-1 = R^-1 R^-T).
 */
export function unscaledCovariance(qr: QrDecomposition): Matrix {
  const n = qr.rows;
  const p = qr.cols;
  const r = qr.rank;
  const a = qr.factors;
  // Rinv upper triangular r x r, column-major.
  const rinv = new Float64Array(r * r);
  for (let j = 0; j < r; j++) {
    rinv[j + j * r] = 1 / a[j + j * n];
    for (let i = j - 1; i >= 0; i--) {
      let s = 0;
      for (let l = i + 1; l <= j; l++) s += a[i + l * n] * rinv[l + j * r];
      rinv[i + j * r] = -s / a[i + i * n];
    }
  }
  const out = createMatrix(p, p);
  out.data.fill(Number.NaN);
  for (let j = 0; j < r; j++) {
    for (let l = 0; l <= j; l++) {
      // (Rinv Rinv')_{jl} = sum_{m >= max(j,l)} Rinv[j,m] Rinv[l,m]
      let s = 0;
      for (let m = j; m < r; m++) s += rinv[j + m * r] * rinv[l + m * r];
      const cj = qr.pivot[j];
      const cl = qr.pivot[l];
      const v = s / (qr.scale[cj] * qr.scale[cl]);
      out.data[cj + cl * p] = v;
      out.data[cl + cj * p] = v;
    }
  }
  return out;
}

/**
 * Diagonal of the hat matrix, h_ii = ||row i of Q1||^2 (leverages), from the factorisation.
 * Reference: D. A. Belsley, E. Kuh and R. E. Welsch (1980), Regression Diagnostics, ch. 2.
 */
export function leverages(qr: QrDecomposition): Float64Array {
  const n = qr.rows;
  const h = new Float64Array(n);
  const e = new Float64Array(n);
  for (let j = 0; j < qr.rank; j++) {
    e.fill(0);
    e[j] = 1;
    applyQ(qr, e, e); // column j of Q
    for (let i = 0; i < n; i++) h[i] += e[i] * e[i];
  }
  return h;
}
