/**
 * Ordinary least squares on a design matrix the caller builds (intercept included by the caller).
 *
 * The fit is a frozen value: coefficients, residuals, fitted values, rank, R^2, sigma, residual
 * degrees of freedom, the "bread" (X'X)^-1 computed from R (never by inverting X'X), the design
 * and response kept by reference, column names and warnings. Covariance estimators
 * (covariance.ts) take this value and never refit.
 *
 * Also defines `LeastSquaresFit`, the shape shared by OLS and NLS fits that covariance estimators
 * accept, and `EstimationWarning`.
 */
import { type Matrix } from "./linalg";
import {
  DEFAULT_RANK_TOLERANCE,
  type PivotingRule,
  type QrDecomposition,
  householderQr,
  leastSquaresSolve,
  unscaledCovariance,
} from "./qr";

/** Statistical trouble reported on a result (misuse throws instead). */
export interface EstimationWarning {
  /** Stable machine-readable code. */
  readonly code:
    | "rank-deficient"
    | "no-residual-degrees-of-freedom"
    | "no-convergence"
    | "high-leverage"
    | "lags-truncated"
    | "failed-draws"
    | "few-clusters";
  /** One plain sentence for people, naming columns or counts. */
  readonly message: string;
}

/**
 * What covariance estimators need from any least-squares fit (OLS or NLS). For NLS the "design"
 * is the Jacobian of the fitted values at the solution.
 */
export interface LeastSquaresFit {
  /** Estimates by column; NaN for aliased columns. */
  readonly coefficients: Float64Array;
  /** Column (parameter) names, one per coefficient. */
  readonly names: readonly string[];
  /** y - fitted. */
  readonly residuals: Float64Array;
  readonly fitted: Float64Array;
  /** n x k design (OLS: X; NLS: Jacobian df/dbeta at the solution), kept by reference. */
  readonly design: Matrix;
  /** y, kept by reference. */
  readonly response: Float64Array;
  /** (X'X)^-1 (NLS: (J'J)^-1), k x k, NaN rows and columns for aliased columns. */
  readonly bread: Matrix;
  /** Numerical rank of the design. */
  readonly rank: number;
  /** aliased[j]: column j is (numerically) a combination of the others; its estimate is NaN. */
  readonly aliased: readonly boolean[];
  /** n, number of observations (rows). */
  readonly observations: number;
  /** n - rank. */
  readonly residualDegreesOfFreedom: number;
  /** Sum of squared residuals. */
  readonly residualSumOfSquares: number;
  /** Residual standard deviation sqrt(RSS / (n - rank)); NaN when n = rank. */
  readonly sigma: number;
  readonly warnings: readonly EstimationWarning[];
}

/** Result of `ols`. */
export interface LinearFit extends LeastSquaresFit {
  readonly kind: "ols";
  /** R^2: centred (1 - RSS/sum (y - ybar)^2) when the model has an intercept, else uncentred (1 - RSS/sum y^2), as R's summary.lm. */
  readonly rSquared: number;
  /** 1 - (1 - R^2) (n - i) / (n - rank), i = 1 with an intercept, else 0 (as R). */
  readonly adjustedRSquared: number;
  /** Whether R^2 treats the model as having an intercept. */
  readonly hasIntercept: boolean;
  /** The pivoted QR factorisation of the design, for reuse (leverages, further solves). */
  readonly qr: QrDecomposition;
  /** Iterative-refinement steps taken. */
  readonly refinementSteps: number;
}

export interface OlsOptions {
  /** Column names; default x1, x2, ... */
  readonly names?: readonly string[];
  /**
   * Whether the model contains an intercept, for R^2 only (the design must already include the
   * constant column: `ols` never adds one). Default: true when some column is constant and non-zero.
   */
  readonly intercept?: boolean;
  /** Rank tolerance of the QR (default 1e-11, see qr.ts). */
  readonly rankTolerance?: number;
  /** Pivoting rule of the QR (default "limited", R lm's choice of aliased columns). */
  readonly pivoting?: PivotingRule;
  /** Iterative refinement steps in compensated arithmetic (default 3; 0 turns it off). */
  readonly refinementSteps?: number;
}

function defaultNames(k: number): string[] {
  return Array.from({ length: k }, (_, j) => `x${j + 1}`);
}

function hasConstantColumn(x: Matrix): boolean {
  const n = x.rows;
  if (n === 0) return false;
  for (let j = 0; j < x.cols; j++) {
    const v0 = x.data[j * n];
    if (v0 === 0) continue;
    let constant = true;
    for (let i = 1; i < n && constant; i++) if (x.data[i + j * n] !== v0) constant = false;
    if (constant) return true;
  }
  return false;
}

/** Throws RangeError for mismatched or non-finite inputs; shared by OLS entry points. */
export function validateRegressionInput(design: Matrix, y: ArrayLike<number>, names?: readonly string[]): void {
  if (design.rows !== y.length) throw new RangeError(`X has ${design.rows} rows but y has ${y.length}`);
  if (design.data.length !== design.rows * design.cols) {
    throw new RangeError(`X claims ${design.rows} x ${design.cols} but holds ${design.data.length} values`);
  }
  if (names !== undefined && names.length !== design.cols) {
    throw new RangeError(`X has ${design.cols} columns but ${names.length} names were given`);
  }
  for (let i = 0; i < y.length; i++) if (!Number.isFinite(y[i])) throw new RangeError(`y[${i}] is not finite: ${y[i]}`);
  const n = design.rows;
  for (let j = 0; j < design.cols; j++) {
    for (let i = 0; i < n; i++) {
      const v = design.data[i + j * n];
      if (!Number.isFinite(v)) throw new RangeError(`X[${i}, ${j}] (${names?.[j] ?? `column ${j + 1}`}) is not finite: ${v}`);
    }
  }
}

/**
 * Ordinary least squares: minimise ||y - X b||^2 by Householder QR with column equilibration and
 * limited column pivoting, then iterative refinement in compensated arithmetic.
 *
 * The caller builds the design, including the intercept column (a column of ones) when wanted.
 * Rank deficiency is not an error: aliased coefficients are NaN, their rows and columns of the
 * bread are NaN, rank and degrees of freedom use the numerical rank, and a "rank-deficient"
 * warning names the aliased columns.
 *
 * Throws RangeError when X and y disagree in length, a value is not finite, names do not match the
 * columns, or there are no columns.
 * Example: `ols(matrixFromRows([[1, 0], [1, 1], [1, 2]]), Float64Array.of(1, 3, 5)).coefficients`
 * is [1, 2] and `.sigma` is 0 (perfect fit, 1 residual degree of freedom).
 * Reference: Golub & Van Loan (2013), section 5.3; R `lm()` for the conventions (aliased = NA,
 * R^2 centred only with an intercept, sigma = sqrt(RSS/(n - rank))).
 */
export function ols(design: Matrix, y: Float64Array, options: OlsOptions = {}): LinearFit {
  validateRegressionInput(design, y, options.names);
  const n = design.rows;
  const k = design.cols;
  if (k === 0) throw new RangeError("X has no columns");
  const names = Object.freeze([...(options.names ?? defaultNames(k))]);
  const refinementSteps = options.refinementSteps ?? 3;
  if (!Number.isInteger(refinementSteps) || refinementSteps < 0) {
    throw new RangeError(`refinementSteps must be a non-negative integer, got ${refinementSteps}`);
  }
  const qr = householderQr(design, {
    tolerance: options.rankTolerance ?? DEFAULT_RANK_TOLERANCE,
    pivoting: options.pivoting ?? "limited",
  });
  const solution = leastSquaresSolve(qr, design, y, refinementSteps);
  const { coefficients, residuals, fitted } = solution;
  const rank = qr.rank;
  const dof = n - rank;
  let rss = 0;
  for (let i = 0; i < n; i++) rss += residuals[i] * residuals[i];
  const sigma = dof > 0 ? Math.sqrt(rss / dof) : Number.NaN;

  const hasIntercept = options.intercept ?? hasConstantColumn(design);
  let tss = 0;
  if (hasIntercept) {
    let mean = 0;
    for (let i = 0; i < n; i++) mean += y[i];
    mean /= n;
    for (let i = 0; i < n; i++) tss += (y[i] - mean) * (y[i] - mean);
  } else {
    for (let i = 0; i < n; i++) tss += y[i] * y[i];
  }
  const rSquared = tss > 0 ? 1 - rss / tss : Number.NaN;
  const adjustedRSquared = dof > 0 ? 1 - ((1 - rSquared) * (n - (hasIntercept ? 1 : 0))) / dof : Number.NaN;

  const warnings: EstimationWarning[] = [];
  if (rank < k) {
    const aliasedNames = names.filter((_, j) => qr.aliased[j]);
    warnings.push({
      code: "rank-deficient",
      message:
        `the design has rank ${rank} < ${k} columns: ${aliasedNames.join(", ")} ` +
        `${aliasedNames.length === 1 ? "is" : "are"} (numerically) a linear combination of earlier columns; ` +
        `${aliasedNames.length === 1 ? "its coefficient is" : "their coefficients are"} not identified and set to NaN`,
    });
  }
  if (dof <= 0) {
    warnings.push({
      code: "no-residual-degrees-of-freedom",
      message: `${n} observations for rank ${rank}: no residual degrees of freedom, sigma and standard errors are undefined`,
    });
  }
  return Object.freeze({
    kind: "ols" as const,
    coefficients,
    names,
    residuals,
    fitted,
    design,
    response: y,
    bread: unscaledCovariance(qr),
    rank,
    aliased: qr.aliased,
    observations: n,
    residualDegreesOfFreedom: dof,
    residualSumOfSquares: rss,
    sigma,
    rSquared,
    adjustedRSquared,
    hasIntercept,
    qr,
    refinementSteps: solution.refinementSteps,
    warnings: Object.freeze(warnings),
  });
}
