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

// ---------------------------------------------------------------------------------------------
// Knowledge production function: specs, samples, fits, covariance, bootstrap, long-run
// implications, per-economy results, scenarios and simulation (kpf-*.ts, implied-growth.ts,
// scenarios.ts). Block added by the model-layer work of issue 3.
// ---------------------------------------------------------------------------------------------
export type {
  KpfCovarianceChoice,
  KpfForm,
  KpfPanelBootstrapScheme,
  KpfResearchGrowthChoice,
  KpfScope,
  KpfSmoothing,
  KpfSpec,
  KpfSpecInput,
} from "./kpf-spec";
export {
  DEFAULT_HP_LAMBDA,
  NAMED_KPF_SPECS,
  REFERENCE_PANEL_SPEC,
  REFERENCE_SPEC,
  TEAM_DEFAULT_SPEC,
  deriveKpfSpec,
  describeKpfSpec,
  kpfSpec,
  namedKpfSpec,
} from "./kpf-spec";
export type { KpfEconomySeries, KpfPanel, KpfSample, KpfSampleRow } from "./kpf-sample";
export { buildKpfSample, hodrickPrescottTrend, validateKpfPanel, validateKpfSeries } from "./kpf-sample";
export type { KpfCoefficientLayout, KpfFit, KpfParameters } from "./kpf-fit";
export { fitKpf, structuralFromCoefficients } from "./kpf-fit";
export type { KpfCovariance } from "./kpf-covariance";
export { kpfAutoHacLags, kpfCovariance } from "./kpf-covariance";
export type { KpfBootstrap, KpfBootstrapOptions } from "./kpf-bootstrap";
export { bootstrapKpf } from "./kpf-bootstrap";
export type {
  EconomyImpliedGrowth,
  ImpliedGrowth,
  ImpliedGrowthOptions,
  IntervalEstimate,
  PerEconomy,
  ResearchGrowthUsed,
  TransitionPath,
} from "./implied-growth";
export { impliedGrowth } from "./implied-growth";
export type { EstimateKpfOptions, KpfEconomyResult, KpfResultDetails } from "./kpf-estimate";
export { economySeed, estimateKpf, kpfInputKey } from "./kpf-estimate";
export type { GrowthScenario, GrowthScenarioInput } from "./scenarios";
export { growthScenario, scenarioForEconomy } from "./scenarios";
export type { SimulateKpfOptions, SimulatedKpfPanel } from "./kpf-simulate";
export { simulateKpfPanel, simulatedEconomyCode } from "./kpf-simulate";
// ---------------------------------------------------------------------------------------------
