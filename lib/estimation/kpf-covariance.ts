/**
 * Covariance of a knowledge production function fit: the chosen estimator of lib/estimation
 * (classical, HC, cluster CR1 by economy, Newey-West HAC) applied to the underlying least-squares
 * fit, carried to the structural parameters (gamma, theta, beta, kappa, ln B by economy) through the
 * fit's Jacobian: V_params = J V_coefficients J'. Never refits.
 */
import {
  type CovarianceEstimate,
  classicalCovariance,
  clusterCovariance,
  hcCovariance,
  neweyWestCovariance,
  neweyWestLags,
} from "./covariance";
import type { KpfFit } from "./kpf-fit";
import type { KpfCovarianceChoice } from "./kpf-spec";
import { type Matrix, createMatrix } from "./linalg";

/** Covariance of a KPF fit. */
export interface KpfCovariance {
  /** The estimator as chosen, and the one actually used. */
  readonly choice: KpfCovarianceChoice;
  /** Covariance of the regression coefficients (the estimate of covariance.ts, with its description and reference call). */
  readonly coefficients: CovarianceEstimate;
  /** Names of the structural vector (as KpfFit.parameterNames). */
  readonly names: readonly string[];
  /** Covariance of the structural vector, J V J' (NaN where not estimated). */
  readonly matrix: Matrix;
  /** Standard errors of the structural vector (0 for fixed parameters). */
  readonly standardErrors: Float64Array;
  /** Degrees of freedom for t intervals (the regression's residual degrees of freedom). */
  readonly degreesOfFreedom: number;
  /** What was used, in words (method, lag, clusters, small-sample factor, reference call). */
  readonly description: string;
  readonly warnings: readonly string[];
}

/**
 * HAC lag actually used for a fit under "auto": floor(4 (T/100)^(2/9)) with T the observations
 * per economy (panel: floor(n / economies)), raised to k - 1 for overlapping k-year averages and to
 * w - 1 for w-year rolling trends (their errors share k - 1 years).
 * Example: with 40 annual observations, 3.
 * Reference: Newey & West (1994), Rev. Economic Studies 61(4); statsmodels cov_hac documentation.
 */
export function kpfAutoHacLags(fit: KpfFit): number {
  const perEconomy = Math.max(1, Math.floor(fit.rows.length / Math.max(1, fit.economies.length)));
  let lags = neweyWestLags(perEconomy);
  const s = fit.spec.smoothing;
  if (s.kind === "average" && s.overlapping) lags = Math.max(lags, s.years - 1);
  if (s.kind === "trend" && s.method === "rolling-log-linear") lags = Math.max(lags, s.years - 1);
  return lags;
}

/**
 * Covariance of a KPF fit under a choice (default: the fit's spec.covariance):
 * classical sigma^2 (X'X)^-1 (R vcov); HC0/HC1/HC3 (R sandwich::vcovHC); cluster CR1 by economy
 * with factor G/(G-1) (n-1)/(n-k) (R sandwich::vcovCL(m, cluster = ~economy, type = "HC1"));
 * Newey-West HAC with the Bartlett kernel, no prewhitening, optional T/(T-k) (R
 * sandwich::NeweyWest(m, lag, prewhite = FALSE, adjust)), autocovariances within each economy in a
 * panel. Structural covariance J V J' with J = fit.parameterJacobian (exact for the linear maps;
 * the delta method for kappa and for theta in the cointegration form).
 * Throws RangeError for an unestimated fit or cluster covariance on a single economy.
 * Example: kpfCovariance(fitKpf(series, REFERENCE_SPEC)).standardErrors[1] is the HAC standard
 *   error of theta (= that of the ln A coefficient).
 * Reference: White (1980); MacKinnon & White (1985); Liang & Zeger (1986); Newey & West (1987);
 * Zeileis (2004, 2006), R package sandwich.
 */
export function kpfCovariance(fit: KpfFit, choice: KpfCovarianceChoice = fit.spec.covariance): KpfCovariance {
  if (!fit.estimated || fit.regression === null || fit.parameterJacobian === null) {
    throw new RangeError(`kpfCovariance: the fit has no estimate (${fit.warnings[fit.warnings.length - 1] ?? "no observations"})`);
  }
  const regression = fit.regression;
  const economyLabels = (): string[] => Array.from(fit.rowEconomy, (e) => fit.economies[e]);
  let coefficients: CovarianceEstimate;
  switch (choice.kind) {
    case "classical":
      coefficients = classicalCovariance(regression);
      break;
    case "HC":
      coefficients = hcCovariance(regression, choice.type);
      break;
    case "cluster":
      if (fit.economies.length < 2) throw new RangeError(`kpfCovariance: clustering by economy needs at least 2 economies, the fit has ${fit.economies.length}`);
      coefficients = clusterCovariance(regression, economyLabels(), { type: "HC1", clusterAdjust: true });
      break;
    case "HAC": {
      const lags = choice.lags === "auto" ? kpfAutoHacLags(fit) : choice.lags;
      coefficients = neweyWestCovariance(regression, {
        lags,
        adjust: choice.adjust,
        groups: fit.economies.length > 1 ? economyLabels() : undefined,
      });
      break;
    }
    default:
      throw new RangeError(`kpfCovariance: unknown covariance kind ${JSON.stringify((choice as { kind: unknown }).kind)}`);
  }
  const J = fit.parameterJacobian;
  const p = J.rows;
  const k = J.cols;
  const V = coefficients.matrix.data;
  // J V J', skipping zero Jacobian entries so that NaN rows of aliased nuisance columns do not leak.
  const JV = new Float64Array(p * k);
  for (let a = 0; a < p; a++) {
    for (let c = 0; c < k; c++) {
      let s = 0;
      for (let l = 0; l < k; l++) {
        const jal = J.data[a + l * p];
        if (jal !== 0) s += jal * V[l + c * k];
      }
      JV[a + c * p] = s;
    }
  }
  const out = createMatrix(p, p);
  for (let a = 0; a < p; a++) {
    for (let b = 0; b <= a; b++) {
      let s = 0;
      for (let c = 0; c < k; c++) {
        const jbc = J.data[b + c * p];
        if (jbc !== 0) s += JV[a + c * p] * jbc;
      }
      out.data[a + b * p] = s;
      out.data[b + a * p] = s;
    }
  }
  const se = new Float64Array(p);
  for (let a = 0; a < p; a++) se[a] = Math.sqrt(out.data[a + a * p]);
  const warnings = coefficients.warnings.map((w) => `${w.message}.`);
  const s = fit.spec.smoothing;
  const overlapping = (s.kind === "average" && s.overlapping) || s.kind === "trend";
  if (overlapping && (choice.kind === "classical" || choice.kind === "HC")) {
    warnings.push(
      `Smoothed growth (${s.kind === "average" ? `${s.years}-year moving averages` : s.method === "hp" ? "HP trend" : `${s.years}-year rolling trends`}) shares years between observations, so their errors are serially correlated: ${choice.kind === "HC" ? choice.type : "classical"} standard errors ignore this and are too small; use HAC or clustering by economy.`,
    );
  }
  return Object.freeze({
    choice,
    coefficients,
    names: fit.parameterNames,
    matrix: out,
    standardErrors: se,
    degreesOfFreedom: coefficients.degreesOfFreedom,
    description: coefficients.description,
    warnings: Object.freeze(warnings),
  });
}
