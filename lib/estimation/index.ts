/**
 * lib/estimation: pure numerics (no Next, React, Prisma or Node I/O).
 *
 * Least squares and covariance core: dense matrices (column-major Float64Array), pivoted
 * Householder QR, OLS, Levenberg-Marquardt NLS, classical / HC / cluster / Newey-West covariances,
 * moving-block bootstraps, a seeded generator and the normal and Student t distributions.
 * Fits, covariances and summaries are separate frozen values: a covariance never refits.
 *
 * Usage:
 *   const fit = ols(matrixFromColumns([ones, lnR, lnA]), y, { names: ["lnB", "gamma", "theta-1"] });
 *   const cov = neweyWestCovariance(fit);              // lag floor(4 (T/100)^(2/9)), adjust T/(T-k)
 *   const table = coefficientTable(fit, cov);          // estimates, SEs, t, p, 95% intervals
 *   const boot = bootstrapOls(fit.design, y, { draws: 999, rng: createRng(2024) });
 */

// Dense matrices and compensated arithmetic
export type { DoubleDouble, Matrix } from "./linalg";
export {
  choleskyInPlace,
  choleskySolveInPlace,
  compensatedDot,
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
} from "./linalg";

// QR factorisation
export type { LeastSquaresSolution, PivotingRule, QrDecomposition, QrOptions } from "./qr";
export {
  DEFAULT_RANK_TOLERANCE,
  applyQ,
  applyQTranspose,
  householderQr,
  leastSquaresSolve,
  leverages,
  unscaledCovariance,
} from "./qr";

// Linear and nonlinear least squares
export type { EstimationWarning, LeastSquaresFit, LinearFit, OlsOptions } from "./ols";
export { ols } from "./ols";
export type { NonlinearFit, NonlinearModel, NlsOptions } from "./nls";
export { nls } from "./nls";

// Covariance estimators and coefficient tables
export type { ClusterCovarianceOptions, CoefficientRow, CovarianceEstimate, HcType, NeweyWestOptions } from "./covariance";
export {
  bartlettWeights,
  classicalCovariance,
  clusterCovariance,
  coefficientTable,
  hcCovariance,
  neweyWestCovariance,
  neweyWestLags,
} from "./covariance";

// Bootstrap
export type {
  BlockBootstrapOptions,
  OlsBootstrapOptions,
  OlsBootstrapResult,
  PanelBlockBootstrap,
  PanelBootstrapOptions,
  PanelBootstrapScheme,
  PanelLayout,
} from "./bootstrap";
export {
  bootstrapOls,
  bootstrapPercentileIntervals,
  createPanelBlockBootstrap,
  defaultBlockLength,
  movingBlockBootstrap,
  movingBlockIndices,
} from "./bootstrap";

// Random numbers and distributions
export type { Rng } from "./random";
export { createRng } from "./random";
export {
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
