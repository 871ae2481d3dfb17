/**
 * Covariance estimators for least-squares fits (OLS and NLS). Each takes a fit value and never
 * refits: it needs the design (NLS: the Jacobian at the solution), the residuals, the bread
 * (X'X)^-1 and the residual degrees of freedom. All are "sandwiches" B M B with B = (X'X)^-1 and a
 * meat M built from the scores u_i = e_i x_i (row i of the design times its residual):
 *
 *   classical    sigma^2 (X'X)^-1
 *   HC0..HC3     M = sum_i w_i e_i^2 x_i x_i'     (White 1980; MacKinnon & White 1985)
 *   cluster      M = c sum_g (sum_{i in g} u_i)(sum_{i in g} u_i)'   (Liang & Zeger 1986)
 *   Newey-West   M = c [Gamma_0 + sum_{j=1..L} w_j (Gamma_j + Gamma_j')], Gamma_j = sum_t u_t u_{t-j}'
 *                (Newey & West 1987, Bartlett weights w_j = 1 - j/(L+1))
 *
 * k in the small-sample factors is the RANK of the fit (number of identified coefficients).
 * Aliased coefficients get NaN rows and columns. Reference implementation matched: R package
 * sandwich 3.0-2 (Zeileis 2004, 2006; Zeileis, Köll & Graham 2020), see each function; the R
 * calls are checked in lib/estimation/r-reference.test.ts.
 */
import { studentTQuantile, studentTTwoSidedPValue } from "./distributions";
import { type Matrix, createMatrix } from "./linalg";
import { householderQr, leastSquaresSolve } from "./qr";
import type { EstimationWarning, LeastSquaresFit } from "./ols";

/** A covariance estimate of the coefficients of a fit. */
export interface CovarianceEstimate {
  /** Short method name, e.g. "HC1", "CR1", "HAC". */
  readonly method: string;
  /** What it is and which reference call it matches. */
  readonly description: string;
  /** k x k covariance matrix by coefficient; NaN rows/columns for aliased coefficients. */
  readonly matrix: Matrix;
  /** Square roots of the diagonal. */
  readonly standardErrors: Float64Array;
  readonly names: readonly string[];
  /** Degrees of freedom for t-based inference: the fit's residual degrees of freedom (as R lmtest::coeftest). */
  readonly degreesOfFreedom: number;
  /** Newey-West: the lag truncation L actually used. */
  readonly lags?: number;
  /** Cluster-robust: number of clusters G. */
  readonly clusters?: number;
  readonly warnings: readonly EstimationWarning[];
}

/** Indices of identified (non-aliased) coefficients. */
function keptColumns(fit: LeastSquaresFit): number[] {
  const kept: number[] = [];
  for (let j = 0; j < fit.coefficients.length; j++) if (!fit.aliased[j]) kept.push(j);
  return kept;
}

function checkFit(fit: LeastSquaresFit): void {
  const n = fit.observations;
  const k = fit.coefficients.length;
  if (fit.design.rows !== n || fit.design.cols !== k) {
    throw new RangeError(`fit design is ${fit.design.rows} x ${fit.design.cols} but the fit has ${n} observations and ${k} coefficients`);
  }
  if (fit.residuals.length !== n) throw new RangeError(`fit has ${n} observations but ${fit.residuals.length} residuals`);
  if (fit.bread.rows !== k || fit.bread.cols !== k) throw new RangeError(`bread must be ${k} x ${k}`);
}

/** B M B restricted to the kept columns, expanded to k x k with NaN elsewhere, times `factor`. */
function assemble(fit: LeastSquaresFit, kept: number[], meat: Float64Array, factor: number): Matrix {
  const k = fit.coefficients.length;
  const r = kept.length;
  const b = new Float64Array(r * r);
  for (let a = 0; a < r; a++) for (let c = 0; c < r; c++) b[a + c * r] = fit.bread.data[kept[a] + kept[c] * k];
  // t = B M, v = t B
  const t = new Float64Array(r * r);
  for (let a = 0; a < r; a++) {
    for (let c = 0; c < r; c++) {
      let s = 0;
      for (let l = 0; l < r; l++) s += b[a + l * r] * meat[l + c * r];
      t[a + c * r] = s;
    }
  }
  const out = createMatrix(k, k);
  out.data.fill(Number.NaN);
  for (let a = 0; a < r; a++) {
    for (let c = 0; c <= a; c++) {
      let s = 0;
      for (let l = 0; l < r; l++) s += t[a + l * r] * b[l + c * r];
      const v = s * factor;
      out.data[kept[a] + kept[c] * k] = v;
      out.data[kept[c] + kept[a] * k] = v;
    }
  }
  return out;
}

function estimate(
  fit: LeastSquaresFit,
  method: string,
  description: string,
  matrix: Matrix,
  warnings: EstimationWarning[],
  extra: { lags?: number; clusters?: number } = {},
): CovarianceEstimate {
  const k = matrix.rows;
  const se = new Float64Array(k);
  for (let j = 0; j < k; j++) se[j] = Math.sqrt(matrix.data[j + j * k]);
  return Object.freeze({
    method,
    description,
    matrix,
    standardErrors: se,
    names: fit.names,
    degreesOfFreedom: fit.residualDegreesOfFreedom,
    ...extra,
    warnings: Object.freeze([...fit.warnings.filter((w) => w.code === "rank-deficient"), ...warnings]),
  });
}

/**
 * Classical (homoskedastic) covariance sigma^2 (X'X)^-1, sigma^2 = RSS / (n - rank).
 * As R `vcov(lm(...))` (and `vcov(nls(...))` for NLS fits).
 * Example: for y = (1, 3, 4) on X = [1 0; 1 1; 1 2], sigma^2 = 1/6 and the slope variance is 1/12.
 * Reference: any regression text, e.g. W. H. Greene, Econometric Analysis, ch. 4.
 */
export function classicalCovariance(fit: LeastSquaresFit): CovarianceEstimate {
  checkFit(fit);
  const k = fit.coefficients.length;
  const s2 = fit.sigma * fit.sigma;
  const m = createMatrix(k, k);
  for (let i = 0; i < k * k; i++) m.data[i] = fit.bread.data[i] * s2;
  return estimate(fit, "classical", "classical sigma^2 (X'X)^-1, as R vcov(lm(...))", m, []);
}

export type HcType = "HC0" | "HC1" | "HC2" | "HC3";

/**
 * Heteroskedasticity-consistent ("robust", "White") covariance (X'X)^-1 [sum_i w_i e_i^2 x_i x_i'] (X'X)^-1:
 * HC0 w_i = 1; HC1 w_i = n/(n - k); HC2 w_i = 1/(1 - h_i); HC3 w_i = 1/(1 - h_i)^2, with leverage
 * h_i = x_i' (X'X)^-1 x_i and k the rank. As R `sandwich::vcovHC(m, type = "HC0" | "HC1" | "HC2" | "HC3")`.
 * An observation with leverage 1 (HC2/HC3) gives infinite or NaN entries and a "high-leverage" warning.
 * Throws RangeError for an unknown type.
 * Reference: H. White (1980), Econometrica 48(4), 817-838; J. G. MacKinnon and H. White (1985),
 * "Some heteroskedasticity-consistent covariance matrix estimators with improved finite sample
 * properties", J. Econometrics 29(3), 305-325.
 */
export function hcCovariance(fit: LeastSquaresFit, type: HcType = "HC1"): CovarianceEstimate {
  checkFit(fit);
  if (type !== "HC0" && type !== "HC1" && type !== "HC2" && type !== "HC3") {
    throw new RangeError(`unknown HC type "${String(type)}" (use HC0, HC1, HC2 or HC3)`);
  }
  const n = fit.observations;
  const k = fit.coefficients.length;
  const kept = keptColumns(fit);
  const r = kept.length;
  const x = fit.design.data;
  const warnings: EstimationWarning[] = [];
  const weights = new Float64Array(n).fill(1);
  if (type === "HC1") weights.fill(n / (n - r));
  if (type === "HC2" || type === "HC3") {
    let highLeverage = 0;
    for (let i = 0; i < n; i++) {
      let h = 0;
      for (let a = 0; a < r; a++) {
        let s = 0;
        for (let c = 0; c < r; c++) s += fit.bread.data[kept[a] + kept[c] * k] * x[i + kept[c] * n];
        h += x[i + kept[a] * n] * s;
      }
      const oneMinus = 1 - h;
      if (oneMinus <= 1e-10) highLeverage++;
      weights[i] = type === "HC2" ? 1 / oneMinus : 1 / (oneMinus * oneMinus);
    }
    if (highLeverage > 0) {
      warnings.push({
        code: "high-leverage",
        message: `${highLeverage} observation(s) have leverage 1 (the fit passes through them): ${type} is undefined for them`,
      });
    }
  }
  const meat = new Float64Array(r * r);
  for (let i = 0; i < n; i++) {
    const e = fit.residuals[i];
    const we2 = weights[i] * e * e;
    for (let a = 0; a < r; a++) {
      const xa = x[i + kept[a] * n] * we2;
      for (let c = 0; c <= a; c++) meat[a + c * r] += xa * x[i + kept[c] * n];
    }
  }
  for (let a = 0; a < r; a++) for (let c = 0; c < a; c++) meat[c + a * r] = meat[a + c * r];
  const matrix = assemble(fit, kept, meat, 1);
  return estimate(fit, type, `${type} (MacKinnon & White 1985), as R sandwich::vcovHC(m, type = "${type}")`, matrix, warnings);
}

/** Scores u_i = e_i x_i for the kept columns, n x r column-major. */
function scores(fit: LeastSquaresFit, kept: number[]): Float64Array {
  const n = fit.observations;
  const r = kept.length;
  const u = new Float64Array(n * r);
  for (let a = 0; a < r; a++) {
    const off = kept[a] * n;
    for (let i = 0; i < n; i++) u[i + a * n] = fit.residuals[i] * fit.design.data[off + i];
  }
  return u;
}

/** Group rows by label, keeping each group's rows in their order of appearance. */
function groupRows(labels: ArrayLike<string | number>, n: number, what: string): number[][] {
  if (labels.length !== n) throw new RangeError(`${what} has ${labels.length} labels but the fit has ${n} observations`);
  const index = new Map<string | number, number[]>();
  for (let i = 0; i < n; i++) {
    const label = labels[i];
    if (label === undefined || label === null || (typeof label === "number" && Number.isNaN(label))) {
      throw new RangeError(`${what} label of row ${i} is missing`);
    }
    let rows = index.get(label);
    if (!rows) {
      rows = [];
      index.set(label, rows);
    }
    rows.push(i);
  }
  return [...index.values()];
}

export interface ClusterCovarianceOptions {
  /**
   * "HC1" (default) multiplies by (n - 1)/(n - k), "HC0" does not; as the `type` of
   * sandwich::vcovCL.
   */
  readonly type?: "HC0" | "HC1";
  /** Multiply by G/(G - 1) (default true), as `cadjust` of sandwich::vcovCL. */
  readonly clusterAdjust?: boolean;
}

/**
 * Cluster-robust covariance (CR1 by default): (X'X)^-1 [sum_g s_g s_g'] (X'X)^-1 times
 * G/(G-1) * (n-1)/(n-k), where s_g = sum of the scores e_i x_i over the rows of cluster g, G the
 * number of clusters and k the rank. Defaults as R
 * `sandwich::vcovCL(m, cluster = ~g, type = "HC1", cadjust = TRUE)` (the vcovCL defaults for lm).
 * Throws RangeError when the labels do not match the rows, a label is missing, or there are fewer
 * than 2 clusters. Warns ("few-clusters") with fewer than 10 clusters (common practice: the
 * estimator is unreliable with few clusters; Cameron & Miller 2015).
 * Reference: K.-Y. Liang and S. L. Zeger (1986), Biometrika 73(1), 13-22; A. C. Cameron and
 * D. L. Miller (2015), "A practitioner's guide to cluster-robust inference", J. Human Resources
 * 50(2), 317-372; A. Zeileis, S. Köll and N. Graham (2020), J. Statistical Software 95(1).
 */
export function clusterCovariance(
  fit: LeastSquaresFit,
  clusters: ArrayLike<string | number>,
  options: ClusterCovarianceOptions = {},
): CovarianceEstimate {
  checkFit(fit);
  const type = options.type ?? "HC1";
  if (type !== "HC0" && type !== "HC1") throw new RangeError(`cluster type must be "HC0" or "HC1", got "${String(type)}"`);
  const clusterAdjust = options.clusterAdjust ?? true;
  const n = fit.observations;
  const groups = groupRows(clusters, n, "clusters");
  const g = groups.length;
  if (g < 2) throw new RangeError(`cluster-robust covariance needs at least 2 clusters, got ${g}`);
  const kept = keptColumns(fit);
  const r = kept.length;
  const u = scores(fit, kept);
  const meat = new Float64Array(r * r);
  const s = new Float64Array(r);
  for (const rows of groups) {
    s.fill(0);
    for (const i of rows) for (let a = 0; a < r; a++) s[a] += u[i + a * n];
    for (let a = 0; a < r; a++) for (let c = 0; c < r; c++) meat[a + c * r] += s[a] * s[c];
  }
  let factor = 1;
  if (clusterAdjust) factor *= g / (g - 1);
  if (type === "HC1") factor *= (n - 1) / (n - r);
  const warnings: EstimationWarning[] = [];
  if (g < 10) {
    warnings.push({
      code: "few-clusters",
      message: `only ${g} clusters: cluster-robust standard errors are unreliable with fewer than about 10 clusters`,
    });
  }
  const name = `CR${type === "HC1" ? 1 : 0}`;
  return estimate(
    fit,
    name,
    `cluster-robust ${name} (${g} clusters), as R sandwich::vcovCL(m, cluster = ~g, type = "${type}", cadjust = ${clusterAdjust ? "TRUE" : "FALSE"})`,
    assemble(fit, kept, meat, factor),
    warnings,
    { clusters: g },
  );
}

/**
 * Newey-West (1994) plug-in lag rule floor(4 (T/100)^(2/9)), the statsmodels default
 * `maxlags` for HAC and the rule in DOMAIN.md section 4. T = 30..70 gives 3.
 * Throws RangeError when T is not a positive integer.
 * Example: `neweyWestLags(40)` is 3, `neweyWestLags(100)` is 4.
 * Reference: W. K. Newey and K. D. West (1994), "Automatic lag selection in covariance matrix
 * estimation", Rev. Economic Studies 61(4), 631-653; statsmodels cov_hac documentation.
 */
export function neweyWestLags(observations: number): number {
  if (!(Number.isInteger(observations) && observations >= 1)) {
    throw new RangeError(`number of observations must be a positive integer, got ${observations}`);
  }
  return Math.floor(4 * Math.pow(observations / 100, 2 / 9));
}

/**
 * Bartlett kernel weights w_j = 1 - j/(L + 1), j = 0..L (length L + 1; w_0 = 1).
 * Throws RangeError when L is not a non-negative integer.
 * Example: `bartlettWeights(3)` is [1, 0.75, 0.5, 0.25].
 * Reference: Newey & West (1987), Econometrica 55(3), 703-708.
 */
export function bartlettWeights(lags: number): Float64Array {
  if (!(Number.isInteger(lags) && lags >= 0)) throw new RangeError(`lags must be a non-negative integer, got ${lags}`);
  const w = new Float64Array(lags + 1);
  for (let j = 0; j <= lags; j++) w[j] = 1 - j / (lags + 1);
  return w;
}

export interface NeweyWestOptions {
  /**
   * Lag truncation L, or "auto" (default): neweyWestLags(T) with T the number of observations, or
   * with groups the mean number of rows per group, floor(n / G).
   */
  readonly lags?: number | "auto";
  /** Multiply by T/(T - k) (default true), as `adjust` of sandwich::NeweyWest. */
  readonly adjust?: boolean;
  /**
   * VAR(1) prewhitening (default false): fit u_t = A u_{t-1} + v_t by least squares without
   * intercept, apply the kernel to v_2..v_T, and recolour with D = (I - A)^-1: meat = D S_v D'
   * (Andrews & Monahan 1992), as sandwich's `prewhite = TRUE` (VAR(1) by `ar(method = "ols",
   * demean = FALSE)`). The adjust factor still uses the original T. Not combined with `groups`.
   */
  readonly prewhite?: boolean;
  /**
   * Panel option: a group label per row (e.g. the economy). The autocovariances are then computed
   * within each group only (the time series of each economy separately, in the row order given,
   * which must be time order) and summed over groups: S = sum_g S_g. Cross-group covariances are
   * set to zero. The small-sample factor uses the total number of rows.
   */
  readonly groups?: ArrayLike<string | number>;
}

/**
 * Newey-West HAC covariance with the Bartlett kernel:
 * (X'X)^-1 [Gamma_0 + sum_{j=1..L} (1 - j/(L+1)) (Gamma_j + Gamma_j')] (X'X)^-1 * T/(T - k),
 * Gamma_j = sum_{t > j} u_t u_{t-j}', u_t = e_t x_t, rows taken in the given order (time order; gaps
 * in the calendar are not seen: row t-1 is the previous observation, as in sandwich).
 * Defaults: lag floor(4 (T/100)^(2/9)), no prewhitening, adjust = TRUE, i.e. as R
 * `sandwich::NeweyWest(m, lag = floor(4 * (T/100)^(2/9)), prewhite = FALSE, adjust = TRUE)`
 * (note that NeweyWest's own defaults are prewhite = TRUE, adjust = FALSE and a different lag rule).
 * A lag >= T is cut to T - 1 with a "lags-truncated" warning (sandwich does the same).
 * With `prewhite: true` the scores are VAR(1)-prewhitened first (as sandwich's prewhite = TRUE).
 * Throws RangeError for a negative or non-integer lag, group labels that do not match the rows,
 * prewhite together with groups, or a failed (singular) prewhitening VAR.
 * Reference: W. K. Newey and K. D. West (1987), "A simple, positive semi-definite,
 * heteroskedasticity and autocorrelation consistent covariance matrix", Econometrica 55(3),
 * 703-708; A. Zeileis (2004), "Econometric computing with HC and HAC covariance matrix
 * estimators", J. Statistical Software 11(10); D. W. K. Andrews and J. C. Monahan (1992), "An
 * improved heteroskedasticity and autocorrelation consistent covariance matrix estimator",
 * Econometrica 60(4), 953-966 (prewhitening).
 */
export function neweyWestCovariance(fit: LeastSquaresFit, options: NeweyWestOptions = {}): CovarianceEstimate {
  checkFit(fit);
  const prewhite = options.prewhite ?? false;
  if (prewhite && options.groups !== undefined) throw new RangeError("prewhitening is not available together with groups");
  const n = fit.observations;
  const adjust = options.adjust ?? true;
  const groups = options.groups === undefined ? [Array.from({ length: n }, (_, i) => i)] : groupRows(options.groups, n, "groups");
  const lagsOption = options.lags ?? "auto";
  let lags: number;
  if (lagsOption === "auto") {
    lags = neweyWestLags(Math.max(1, Math.floor(n / groups.length)));
  } else {
    if (!(Number.isInteger(lagsOption) && lagsOption >= 0)) throw new RangeError(`lags must be a non-negative integer or "auto", got ${lagsOption}`);
    lags = lagsOption;
  }
  const warnings: EstimationWarning[] = [];
  const longest = Math.max(...groups.map((rows) => rows.length));
  if (lags > longest - 1) {
    warnings.push({
      code: "lags-truncated",
      message: `lag ${lags} is not below the ${groups.length > 1 ? "longest group length" : "number of observations"} ${longest}: autocovariances beyond lag ${longest - 1} do not exist`,
    });
  }
  const weights = bartlettWeights(lags);
  const kept = keptColumns(fit);
  const r = kept.length;
  let u = scores(fit, kept);
  let recolour: Float64Array | null = null;
  if (prewhite) {
    const whitened = prewhitenVar1(u, n, r);
    u = whitened.residuals;
    recolour = whitened.recolour;
    groups.splice(0, groups.length, Array.from({ length: n - 1 }, (_, i) => i));
  }
  const rowsInScores = prewhite ? n - 1 : n;
  let meat: Float64Array = new Float64Array(r * r);
  for (const rows of groups) {
    const m = rows.length;
    // The group's scores with its rows in order, column-major m x r (without groups: u itself).
    const g = options.groups === undefined ? u : gatherRows(u, rowsInScores, r, rows);
    for (let j = 0; j <= Math.min(lags, m - 1); j++) {
      const w = weights[j];
      if (w === 0) continue;
      for (let a = 0; a < r; a++) {
        for (let c = 0; c < r; c++) {
          // sum_t u_t[a] u_{t-j}[c]
          let s = 0;
          const ua = a * m;
          const uc = c * m - j;
          for (let t = j; t < m; t++) s += g[ua + t] * g[uc + t];
          if (j === 0) {
            meat[a + c * r] += s;
          } else {
            meat[a + c * r] += w * s;
            meat[c + a * r] += w * s;
          }
        }
      }
    }
  }
  if (recolour !== null) meat = sandwichProduct(recolour, meat, r);
  const factor = adjust ? n / (n - r) : 1;
  const where = groups.length > 1 ? `, within ${groups.length} groups` : "";
  return estimate(
    fit,
    "HAC",
    `Newey-West HAC, Bartlett kernel, lag ${lags}${where}, ${prewhite ? "VAR(1) prewhitening" : "no prewhitening"}, ${adjust ? "adjust T/(T-k)" : "no small-sample factor"}; ` +
      `as R sandwich::NeweyWest(m, lag = ${lags}, prewhite = ${prewhite ? "TRUE" : "FALSE"}, adjust = ${adjust ? "TRUE" : "FALSE"})${groups.length > 1 ? " applied per group and summed" : ""}`,
    assemble(fit, kept, meat, factor),
    warnings,
    { lags },
  );
}

/** Rows `rows` of the column-major n x r matrix u, in that order, as a column-major rows.length x r matrix. */
function gatherRows(u: Float64Array, n: number, r: number, rows: readonly number[]): Float64Array {
  const m = rows.length;
  const g = new Float64Array(m * r);
  for (let a = 0; a < r; a++) for (let t = 0; t < m; t++) g[t + a * m] = u[rows[t] + a * n];
  return g;
}

/** D M D' for r x r column-major matrices. */
function sandwichProduct(d: Float64Array, m: Float64Array, r: number): Float64Array {
  const t = new Float64Array(r * r);
  for (let a = 0; a < r; a++) for (let c = 0; c < r; c++) {
    let s = 0;
    for (let l = 0; l < r; l++) s += d[a + l * r] * m[l + c * r];
    t[a + c * r] = s;
  }
  const out = new Float64Array(r * r);
  for (let a = 0; a < r; a++) for (let c = 0; c < r; c++) {
    let s = 0;
    for (let l = 0; l < r; l++) s += t[a + l * r] * d[c + l * r];
    out[a + c * r] = s;
  }
  return out;
}

/**
 * VAR(1) prewhitening of the n x r score matrix u (column-major): A = (sum u_t u_{t-1}')
 * (sum u_{t-1} u_{t-1}')^-1 over t = 2..n (least squares, no intercept), residuals
 * v_t = u_t - A u_{t-1} ((n-1) x r) and recolouring matrix D = (I - A)^-1.
 * Throws RangeError when the lagged scores are singular or I - A is singular.
 */
function prewhitenVar1(u: Float64Array, n: number, r: number): { residuals: Float64Array; recolour: Float64Array } {
  if (n < r + 2) throw new RangeError(`VAR(1) prewhitening needs more than ${r + 1} observations, got ${n}`);
  // Least squares of each u_t[a] on u_{t-1} via QR: regress Y (n-1 x r) on X = lagged u (n-1 x r).
  const m = n - 1;
  const lagged = createMatrix(m, r);
  for (let c = 0; c < r; c++) for (let t = 0; t < m; t++) lagged.data[t + c * m] = u[t + c * n];
  const qr = householderQr(lagged, { tolerance: 0 });
  if (qr.rank < r) throw new RangeError("VAR(1) prewhitening failed: the lagged scores are singular");
  const a = new Float64Array(r * r); // A[a, c]: coefficient of u_{t-1}[c] in the equation of u_t[a]
  const residuals = new Float64Array(m * r);
  const target = new Float64Array(m);
  for (let eq = 0; eq < r; eq++) {
    for (let t = 0; t < m; t++) target[t] = u[t + 1 + eq * n];
    const solution = leastSquaresSolve(qr, lagged, target, 1);
    for (let c = 0; c < r; c++) a[eq + c * r] = solution.coefficients[c];
    for (let t = 0; t < m; t++) residuals[t + eq * m] = solution.residuals[t];
  }
  // D = (I - A)^-1 by QR of I - A.
  const iMinusA = createMatrix(r, r);
  for (let i = 0; i < r; i++) for (let c = 0; c < r; c++) iMinusA.data[i + c * r] = (i === c ? 1 : 0) - a[i + c * r];
  const qrD = householderQr(iMinusA, { tolerance: 0 });
  if (qrD.rank < r) throw new RangeError("VAR(1) prewhitening failed: I - A is singular (unit root in the scores)");
  const recolour = new Float64Array(r * r);
  const unit = new Float64Array(r);
  for (let c = 0; c < r; c++) {
    unit.fill(0);
    unit[c] = 1;
    const column = leastSquaresSolve(qrD, iMinusA, unit, 1).coefficients;
    for (let i = 0; i < r; i++) recolour[i + c * r] = column[i];
  }
  return { residuals, recolour };
}

/** One row of a coefficient table. */
export interface CoefficientRow {
  readonly name: string;
  readonly estimate: number;
  readonly standardError: number;
  readonly tStatistic: number;
  /** Two-sided p-value from Student t with the covariance's degrees of freedom. */
  readonly pValue: number;
  readonly lower: number;
  readonly upper: number;
}

/**
 * Coefficient table: estimate, standard error, t = estimate / se, two-sided p-value and the
 * `level` confidence interval estimate -/+ t_{df, (1+level)/2} se, with df the covariance's degrees
 * of freedom (override with `degreesOfFreedom`; Infinity gives normal intervals). As R
 * `lmtest::coeftest(m, vcov = V)` and `coefci`.
 * Throws RangeError when level is not in (0, 1) or the covariance does not match the fit.
 */
export function coefficientTable(
  fit: LeastSquaresFit,
  covariance: CovarianceEstimate,
  options: { level?: number; degreesOfFreedom?: number } = {},
): readonly CoefficientRow[] {
  const level = options.level ?? 0.95;
  if (!(level > 0 && level < 1)) throw new RangeError(`level must be in (0, 1), got ${level}`);
  const k = fit.coefficients.length;
  if (covariance.matrix.rows !== k) throw new RangeError(`covariance is ${covariance.matrix.rows} x ${covariance.matrix.rows} but the fit has ${k} coefficients`);
  const df = options.degreesOfFreedom ?? covariance.degreesOfFreedom;
  const quantile = df > 0 ? studentTQuantile((1 + level) / 2, df) : Number.NaN;
  const rows: CoefficientRow[] = [];
  for (let j = 0; j < k; j++) {
    const estimateJ = fit.coefficients[j];
    const se = covariance.standardErrors[j];
    const t = estimateJ / se;
    rows.push(
      Object.freeze({
        name: fit.names[j],
        estimate: estimateJ,
        standardError: se,
        tStatistic: t,
        pValue: df > 0 && Number.isFinite(t) ? studentTTwoSidedPValue(t, df) : Number.NaN,
        lower: estimateJ - quantile * se,
        upper: estimateJ + quantile * se,
      }),
    );
  }
  return Object.freeze(rows);
}
