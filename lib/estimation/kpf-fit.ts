/**
 * Fitting the knowledge production function dA/dt = B R^gamma A^theta to one economy or to a
 * panel with economy fixed effects. `fitKpf` returns a frozen value: the structural parameters
 * (gamma, theta, beta, kappa = long-run elasticity g* / n, ln B per economy), the underlying least
 * squares fit (LinearFit or NonlinearFit of lib/estimation), the rows used with their years, what
 * was dropped, and warnings in words. Covariances (kpf-covariance.ts) and long-run implications
 * (implied-growth.ts) are separate values computed from it; nothing here refits.
 *
 * Estimating equations (inputs at the input year s + 1 - L, see kpf-sample.ts):
 *   log-linear         ln g = ln B_e + gamma ln R + (theta - 1) ln A                 (OLS)
 *   capital-augmented  ln g = ln B_e + gamma ln R + beta ln K + (theta - 1) ln A     (OLS)
 *   levels-nls         A_t - A_{t-1} = B_e R^gamma A^theta                           (Levenberg-Marquardt)
 *   cointegration      ln A_t = c_e + kappa ln R + sum_j phi_j dln R_{+j}            (static or dynamic OLS)
 * Restrictions move the fixed terms to the left side (gamma = 1: ln g - ln R). Panels use dummy
 * columns (LSDV: an intercept plus one dummy per economy but the first, economies sorted by code),
 * exactly R's lm(y ~ x + factor(economy)), so that the rank k in small-sample factors is R's
 * (cluster CR1 then matches sandwich::vcovCL(type = "HC1")).
 */
import { type Matrix, createMatrix } from "./linalg";
import { type KpfEconomySeries, type KpfPanel, type KpfSample, type KpfSampleRow, buildValidatedSample, validateKpfPanel } from "./kpf-sample";
import type { KpfSpec } from "./kpf-spec";
import { nls, type NonlinearFit } from "./nls";
import { type LinearFit, ols } from "./ols";

/** Where each structural parameter sits in the regression's coefficient vector (-1: not estimated). */
export interface KpfCoefficientLayout {
  readonly form: KpfSpec["form"];
  /** Index of gamma (growth forms, levels-nls), -1 when fixed or not identified. */
  readonly gamma: number;
  /** Index of the ln A coefficient (theta - 1 in growth forms; theta in levels-nls), -1 when fixed. */
  readonly theta: number;
  /** Index of beta (capital-augmented), else -1. */
  readonly beta: number;
  /** Index of kappa (cointegration), else -1. */
  readonly kappa: number;
  /** Offset added to the ln A coefficient to give theta: 1 in the growth forms, 0 in levels-nls. */
  readonly thetaOffset: number;
  readonly gammaFixed: number | null;
  readonly thetaFixed: number | null;
}

/** Structural parameters of a fit (NaN where not estimated or not identified). */
export interface KpfParameters {
  readonly gamma: number;
  readonly theta: number;
  /** Capital elasticity (capital-augmented form), NaN otherwise. */
  readonly beta: number;
  /**
   * Long-run elasticity of A to R, kappa = g* / n: gamma/(1 - theta) (log-linear, levels-nls),
   * (beta + gamma)/(1 - theta - beta) (capital-augmented), the cointegrating coefficient.
   */
  readonly kappa: number;
  /** ln B by economy, in the order of `economies` (NaN in the cointegration form, where c_e is not ln B). */
  readonly logB: readonly number[];
}

/** Result of fitKpf. */
export interface KpfFit {
  readonly kind: "kpf";
  readonly spec: KpfSpec;
  /** "diagnostic" for single-economy fits (imprecise; DOMAIN.md section 8), "pooled" for panels. */
  readonly role: "diagnostic" | "pooled";
  /** Economies in the estimation, sorted by code (the order of rows and of logB). */
  readonly economies: readonly string[];
  /** Economies left out (too few usable observations), with the reason in words. */
  readonly excluded: readonly { readonly economy: string; readonly reason: string }[];
  /** Per input economy, the sample with its dropped years. */
  readonly samples: readonly KpfSample[];
  /** False when there is no estimate (too few observations); parameters are then NaN. */
  readonly estimated: boolean;
  /** Regression rows in order (economy blocks in `economies` order, years increasing). */
  readonly rows: readonly KpfSampleRow[];
  /** Economy index (into `economies`) of each row. */
  readonly rowEconomy: Int32Array;
  /** The least-squares fit underneath (null without an estimate). */
  readonly regression: LinearFit | NonlinearFit | null;
  readonly layout: KpfCoefficientLayout;
  readonly parameters: KpfParameters;
  /** Names of the structural vector: gamma, theta, beta, kappa, then "logB:<economy>" per economy. */
  readonly parameterNames: readonly string[];
  /** The structural vector in that order. */
  readonly parameterValues: Float64Array;
  /** d(structural)/d(coefficients), (4 + E) x k; null without an estimate. Exact for linear maps, the delta-method linearisation otherwise. */
  readonly parameterJacobian: Matrix | null;
  /** Sample means of ln R and ln A used to centre the levels-nls parameters (NaN otherwise). */
  readonly centring: { readonly lnR: number; readonly lnA: number };
  /** The input series, by reference (never modified), in `economies` order. */
  readonly data: readonly KpfEconomySeries[];
  readonly warnings: readonly string[];
}

const STRUCTURAL = ["gamma", "theta", "beta", "kappa"] as const;

/**
 * Structural parameters (gamma, theta, beta, kappa) from a coefficient vector stored at
 * coefficients[offset .. offset + k), written into out[outOffset .. outOffset + 4). Allocation-free (bootstrap loops).
 * gamma = fixed or b_gamma; theta = fixed or offset + b_lnA; beta = b_lnK; kappa as in KpfParameters;
 * cointegration: kappa = b_lnR, theta = 1 - gamma/kappa when gamma is fixed, gamma = kappa (1 - theta)
 * when theta is fixed.
 * Example: with the log-linear layout {gamma: 1, theta: 2} and b = [-3, 0.5, -0.5]: [0.5, 0.5, NaN, 1].
 * Reference: the estimating equations in the module comment.
 */
export function structuralFromCoefficients(
  layout: KpfCoefficientLayout,
  coefficients: ArrayLike<number>,
  offset: number,
  out: Float64Array,
  outOffset = 0,
): void {
  if (layout.form === "cointegration") {
    const kappa = coefficients[offset + layout.kappa];
    out[outOffset + 3] = kappa;
    out[outOffset + 2] = Number.NaN;
    if (layout.gammaFixed !== null) {
      out[outOffset] = layout.gammaFixed;
      out[outOffset + 1] = 1 - layout.gammaFixed / kappa;
    } else if (layout.thetaFixed !== null) {
      out[outOffset + 1] = layout.thetaFixed;
      out[outOffset] = kappa * (1 - layout.thetaFixed);
    } else {
      out[outOffset] = Number.NaN;
      out[outOffset + 1] = Number.NaN;
    }
    return;
  }
  const gamma = layout.gamma >= 0 ? coefficients[offset + layout.gamma] : (layout.gammaFixed as number);
  const theta = layout.theta >= 0 ? layout.thetaOffset + coefficients[offset + layout.theta] : (layout.thetaFixed as number);
  const beta = layout.beta >= 0 ? coefficients[offset + layout.beta] : Number.NaN;
  out[outOffset] = gamma;
  out[outOffset + 1] = theta;
  out[outOffset + 2] = beta;
  out[outOffset + 3] = layout.beta >= 0 ? (beta + gamma) / (1 - theta - beta) : gamma / (1 - theta);
}

function emptyParameters(economies: number): KpfParameters {
  return Object.freeze({
    gamma: Number.NaN,
    theta: Number.NaN,
    beta: Number.NaN,
    kappa: Number.NaN,
    logB: Object.freeze(new Array<number>(economies).fill(Number.NaN)),
  });
}

function formatNumber(x: number): string {
  return Number.isFinite(x) ? String(Number(x.toPrecision(4))) : String(x);
}

/**
 * Knowledge production function fit (see the module comment for the equations).
 * Scope "economy": `data` is one series (or a one-element panel); scope "panel": a panel, pooled
 * with economy fixed effects, economies with fewer than spec.minObservations usable observations
 * left out with a warning. Fewer usable observations than the minimum (or no economy left): an
 * unestimated fit (estimated = false, NaN parameters) with a warning, not an error. levels-nls
 * starts from the log-linear fit on the years with positive growth (or, with fewer such years than
 * parameters, from gamma = 1, theta = 0.5) and warns when it does not converge.
 * Flags in words: gamma or theta outside spec.plausible; rank deficiency; no convergence.
 * Throws RangeError for an invalid series or panel (see validateKpfSeries), several economies in
 * economy scope, or a capital-augmented spec without capital.
 * Example: fitKpf(series, REFERENCE_SPEC).parameters.theta -> 1 + the ln A coefficient of
 *   lm(log(g) ~ lnR + lnA) on the reference sample.
 * Reference: Jones (1995), JPE 103(4); Bloom, Jones, Van Reenen & Webb (2020), AER 110(4) (gamma = 1);
 * Stock & Watson (1993), Econometrica 61(4) (dynamic OLS); Ha & Howitt (2007), JMCB (cointegration view).
 */
export function fitKpf(data: KpfEconomySeries | KpfPanel, spec: KpfSpec): KpfFit {
  const panel: KpfPanel = Array.isArray(data) ? (data as KpfPanel) : [data as KpfEconomySeries];
  validateKpfPanel(panel);
  return fitValidatedKpf(panel, spec);
}

/**
 * Knowledge production function fit of a panel already checked by validateKpfPanel (as fitKpf,
 * without a second validation pass; estimateKpf validates once).
 * Throws as fitKpf except for invalid series. Example: fitValidatedKpf([series], spec) equals fitKpf(series, spec).
 * Reference: as fitKpf.
 */
export function fitValidatedKpf(panel: KpfPanel, spec: KpfSpec): KpfFit {
  if (spec.scope === "economy" && panel.length !== 1) {
    throw new RangeError(`fitKpf: scope "economy" fits one economy at a time, got ${panel.length} (fit each, or use estimateKpf)`);
  }
  const warnings: string[] = [];
  const samples = panel.map((series) => buildValidatedSample(series, spec));
  const order = samples.map((_, i) => i).sort((a, b) => (samples[a].economy < samples[b].economy ? -1 : samples[a].economy > samples[b].economy ? 1 : 0));
  const excluded: { economy: string; reason: string }[] = [];
  const included: number[] = [];
  for (const i of order) {
    const s = samples[i];
    for (const w of s.warnings) warnings.push(w);
    if (s.rows.length < spec.minObservations) {
      const reason =
        `${s.economy}: ${s.rows.length} usable observation${s.rows.length === 1 ? "" : "s"}, fewer than the minimum of ${spec.minObservations}` +
        (spec.scope === "panel" ? ": left out of the pooled fit" : ": no estimate") +
        ` (${s.nonPositiveYears.length} non-positive growth, ${s.missingInputYears.length} missing inputs).`;
      excluded.push({ economy: s.economy, reason });
      warnings.push(reason);
    } else {
      included.push(i);
    }
  }
  const economies = included.map((i) => samples[i].economy);
  const dataInOrder = included.map((i) => panel[i]);
  const rows: KpfSampleRow[] = [];
  const rowEconomyList: number[] = [];
  included.forEach((i, e) => {
    for (const row of samples[i].rows) {
      rows.push(row);
      rowEconomyList.push(e);
    }
  });
  const rowEconomy = Int32Array.from(rowEconomyList);
  const role = spec.scope === "panel" ? "pooled" : "diagnostic";
  const base = {
    kind: "kpf" as const,
    spec,
    role: role as "diagnostic" | "pooled",
    economies: Object.freeze(economies),
    excluded: Object.freeze(excluded.map((x) => Object.freeze(x))),
    samples: Object.freeze(samples),
    rows: Object.freeze(rows),
    rowEconomy,
    data: Object.freeze(dataInOrder),
  };
  const gammaFixed = spec.restrictions.gamma;
  const thetaFixed = spec.restrictions.theta;
  const parameterNames = Object.freeze([...STRUCTURAL, ...economies.map((e) => `logB:${e}`)]);

  if (economies.length === 0) {
    if (spec.scope === "panel") warnings.push("No economy has enough usable observations: no pooled estimate.");
    return Object.freeze({
      ...base,
      estimated: false,
      regression: null,
      layout: Object.freeze({ form: spec.form, gamma: -1, theta: -1, beta: -1, kappa: -1, thetaOffset: 1, gammaFixed, thetaFixed }),
      parameters: emptyParameters(0),
      parameterNames,
      parameterValues: new Float64Array(4).fill(Number.NaN),
      parameterJacobian: null,
      centring: Object.freeze({ lnR: Number.NaN, lnA: Number.NaN }),
      warnings: Object.freeze(warnings),
    });
  }

  const fitted = spec.form === "levels-nls" ? fitLevels(rows, rowEconomy, economies, spec, warnings) : fitLinear(rows, rowEconomy, economies, spec);
  const { regression, layout, logBRows, centring } = fitted;
  const k = regression.coefficients.length;
  const E = economies.length;

  // Structural values and Jacobian.
  const structural = new Float64Array(4);
  structuralFromCoefficients(layout, regression.coefficients, 0, structural);
  const p = 4 + E;
  const jac = createMatrix(p, k);
  const J = jac.data;
  const setJ = (row: number, col: number, v: number): void => {
    J[row + col * p] = v;
  };
  const [gamma, theta, beta] = structural;
  if (layout.form === "cointegration") {
    setJ(3, layout.kappa, 1);
    const kappa = structural[3];
    if (gammaFixed !== null) setJ(1, layout.kappa, gammaFixed / (kappa * kappa));
    else if (thetaFixed !== null) setJ(0, layout.kappa, 1 - thetaFixed);
    else {
      for (let c = 0; c < k; c++) {
        setJ(0, c, Number.NaN);
        setJ(1, c, Number.NaN);
      }
    }
    for (let c = 0; c < k; c++) setJ(2, c, Number.NaN);
  } else {
    if (layout.gamma >= 0) setJ(0, layout.gamma, 1);
    if (layout.theta >= 0) setJ(1, layout.theta, 1);
    if (layout.beta >= 0) setJ(2, layout.beta, 1);
    else for (let c = 0; c < k; c++) setJ(2, c, Number.NaN);
    // kappa = gamma/(1 - theta) or (beta + gamma)/(1 - theta - beta)
    const b = layout.beta >= 0 ? beta : 0;
    const denom = 1 - theta - b;
    const dGamma = 1 / denom;
    const dTheta = (b + gamma) / (denom * denom);
    const dBeta = layout.beta >= 0 ? 1 / denom + (b + gamma) / (denom * denom) : 0;
    for (let c = 0; c < k; c++) setJ(3, c, dGamma * J[0 + c * p] + dTheta * J[1 + c * p] + (layout.beta >= 0 ? dBeta * J[2 + c * p] : 0));
  }
  const logB = new Array<number>(E);
  for (let e = 0; e < E; e++) {
    const { offset, weights } = logBRows(e, structural);
    let value = offset;
    for (let c = 0; c < k; c++) {
      const w = weights[c];
      if (w !== 0) {
        value += w * regression.coefficients[c];
        setJ(4 + e, c, w);
      }
    }
    logB[e] = value;
  }
  // levels-nls: logB_e = c_e - gamma mR - theta mA also depends on gamma and theta.
  if (layout.form === "levels-nls") {
    for (let e = 0; e < E; e++) {
      if (layout.gamma >= 0) setJ(4 + e, layout.gamma, J[4 + e + layout.gamma * p] - centring.lnR);
      if (layout.theta >= 0) setJ(4 + e, layout.theta, J[4 + e + layout.theta * p] - centring.lnA);
    }
  }
  const values = new Float64Array(p);
  values.set(structural, 0);
  for (let e = 0; e < E; e++) values[4 + e] = logB[e];

  for (const w of regression.warnings) warnings.push(`${economies.length === 1 ? `${economies[0]}: ` : ""}${w.message}.`);
  const estimated = !regression.coefficients.some((v, j) => Number.isNaN(v) && isStructuralColumn(layout, j));
  if (!estimated) warnings.push("A structural coefficient is not identified (rank-deficient design): no estimate.");
  const where = spec.scope === "panel" ? "the pooled" : `${economies[0]}'s`;
  const [gLo, gHi] = spec.plausible.gamma;
  const [tLo, tHi] = spec.plausible.theta;
  if (layout.gamma >= 0 && Number.isFinite(gamma) && (gamma < gLo || gamma > gHi)) {
    warnings.push(`Implausible estimate: ${where} gamma = ${formatNumber(gamma)} lies outside the plausible range [${gLo}, ${gHi}]; treat it as a diagnostic, not a result.`);
  }
  if ((layout.theta >= 0 || (layout.form === "cointegration" && gammaFixed !== null)) && Number.isFinite(theta) && (theta < tLo || theta > tHi)) {
    warnings.push(`Implausible estimate: ${where} theta = ${formatNumber(theta)} lies outside the plausible range [${tLo}, ${tHi}]; treat it as a diagnostic, not a result.`);
  }
  if (layout.form === "cointegration" && gammaFixed === null && thetaFixed === null) {
    warnings.push("The cointegration form identifies kappa = gamma/(1 - theta) only: gamma and theta are not separately identified (fix one of them to recover the other).");
  }

  return Object.freeze({
    ...base,
    estimated,
    regression,
    layout,
    parameters: Object.freeze({
      gamma: structural[0],
      theta: structural[1],
      beta: structural[2],
      kappa: structural[3],
      logB: Object.freeze(logB),
    }),
    parameterNames,
    parameterValues: values,
    parameterJacobian: jac,
    centring: Object.freeze(centring),
    warnings: Object.freeze(warnings),
  });
}

function isStructuralColumn(layout: KpfCoefficientLayout, j: number): boolean {
  return j === layout.gamma || j === layout.theta || j === layout.beta || j === layout.kappa;
}

interface LinearPieces {
  regression: LinearFit | NonlinearFit;
  layout: KpfCoefficientLayout;
  /** ln B_e = offset + weights . coefficients. */
  logBRows: (e: number, structural: Float64Array) => { offset: number; weights: Float64Array };
  centring: { lnR: number; lnA: number };
}

/** Growth forms and cointegration: OLS on the LSDV design. */
function fitLinear(rows: readonly KpfSampleRow[], rowEconomy: Int32Array, economies: readonly string[], spec: KpfSpec): LinearPieces {
  const n = rows.length;
  const E = economies.length;
  const gammaFixed = spec.restrictions.gamma;
  const thetaFixed = spec.restrictions.theta;
  const names: string[] = ["(Intercept)"];
  const columns: Float64Array[] = [new Float64Array(n).fill(1)];
  const y = new Float64Array(n);
  let iGamma = -1;
  let iTheta = -1;
  let iBeta = -1;
  let iKappa = -1;
  if (spec.form === "cointegration") {
    for (let i = 0; i < n; i++) y[i] = rows[i].lnAt;
    iKappa = columns.length;
    names.push("lnR");
    columns.push(Float64Array.from(rows, (r) => r.lnR));
    const p = spec.leadsLags;
    for (let j = -p; j <= p && p > 0; j++) {
      names.push(j === 0 ? "dlnR" : j < 0 ? `dlnR.lag${-j}` : `dlnR.lead${j}`);
      columns.push(Float64Array.from(rows, (r) => r.leadsLags[j + p]));
    }
  } else {
    for (let i = 0; i < n; i++) {
      let v = Math.log(rows[i].growth);
      if (gammaFixed !== null) v -= gammaFixed * rows[i].lnR;
      if (thetaFixed !== null) v -= (thetaFixed - 1) * rows[i].lnA;
      y[i] = v;
    }
    if (gammaFixed === null) {
      iGamma = columns.length;
      names.push("lnR");
      columns.push(Float64Array.from(rows, (r) => r.lnR));
    }
    if (spec.form === "capital-augmented") {
      iBeta = columns.length;
      names.push("lnK");
      columns.push(Float64Array.from(rows, (r) => r.lnK));
    }
    if (thetaFixed === null) {
      iTheta = columns.length;
      names.push("lnA");
      columns.push(Float64Array.from(rows, (r) => r.lnA));
    }
  }
  const firstDummy = columns.length;
  for (let e = 1; e < E; e++) {
    names.push(`economy${economies[e]}`);
    const d = new Float64Array(n);
    for (let i = 0; i < n; i++) if (rowEconomy[i] === e) d[i] = 1;
    columns.push(d);
  }
  const k = columns.length;
  const data = new Float64Array(n * k);
  for (let j = 0; j < k; j++) data.set(columns[j], j * n);
  const regression = ols(createMatrix(n, k, data), y, { names, intercept: true });
  const layout: KpfCoefficientLayout = Object.freeze({
    form: spec.form,
    gamma: iGamma,
    theta: iTheta,
    beta: iBeta,
    kappa: iKappa,
    thetaOffset: 1,
    gammaFixed,
    thetaFixed,
  });
  const cointegration = spec.form === "cointegration";
  return {
    regression,
    layout,
    logBRows: (e) => {
      const weights = new Float64Array(k);
      if (cointegration) return { offset: Number.NaN, weights };
      weights[0] = 1;
      if (e > 0) weights[firstDummy + e - 1] = 1;
      return { offset: 0, weights };
    },
    centring: { lnR: Number.NaN, lnA: Number.NaN },
  };
}

/** levels-nls: Levenberg-Marquardt on centred parameters, started from the log-linear fit. */
function fitLevels(
  rows: readonly KpfSampleRow[],
  rowEconomy: Int32Array,
  economies: readonly string[],
  spec: KpfSpec,
  warnings: string[],
): LinearPieces {
  const n = rows.length;
  const E = economies.length;
  const gammaFixed = spec.restrictions.gamma;
  const thetaFixed = spec.restrictions.theta;
  let mR = 0;
  let mA = 0;
  for (const r of rows) {
    mR += r.lnR;
    mA += r.lnA;
  }
  mR /= n;
  mA /= n;
  const cR = Float64Array.from(rows, (r) => r.lnR - mR);
  const cA = Float64Array.from(rows, (r) => r.lnA - mA);
  const response = Float64Array.from(rows, (r) => r.growth);
  // Parameters: [gamma?, theta?, c_1 .. c_E].
  const names: string[] = [];
  let iGamma = -1;
  let iTheta = -1;
  if (gammaFixed === null) {
    iGamma = names.length;
    names.push("gamma");
  }
  if (thetaFixed === null) {
    iTheta = names.length;
    names.push("theta");
  }
  const firstC = names.length;
  for (const e of economies) names.push(`c:${e}`);
  const p = names.length;

  // Start: log-linear on the rows with positive change, with the same restrictions and fixed effects.
  const start = new Float64Array(p);
  const positive = rows.map((_, i) => i).filter((i) => response[i] > 0);
  const presentEconomies = new Set(positive.map((i) => rowEconomy[i]));
  const slopes = (gammaFixed === null ? 1 : 0) + (thetaFixed === null ? 1 : 0);
  let startedFromLogLinear = false;
  if (positive.length > slopes + E + 1 && presentEconomies.size === E) {
    const m = positive.length;
    const k = 1 + slopes + (E - 1);
    const x = new Float64Array(m * k);
    const yy = new Float64Array(m);
    positive.forEach((i, r) => {
      const row = rows[i];
      // growth per unit of A: ln((A_t - A_{t-1})/A_{t-L}) = ln B + gamma ln R + (theta - 1) ln A
      let v = Math.log(response[i]) - row.lnA;
      if (gammaFixed !== null) v -= gammaFixed * row.lnR;
      if (thetaFixed !== null) v -= (thetaFixed - 1) * row.lnA;
      yy[r] = v;
      x[r] = 1;
      let c = 1;
      if (gammaFixed === null) x[r + m * c++] = row.lnR;
      if (thetaFixed === null) x[r + m * c++] = row.lnA;
      if (rowEconomy[i] > 0) x[r + m * (c + rowEconomy[i] - 1)] = 1;
    });
    const start0 = ols(createMatrix(m, k, x), yy, { refinementSteps: 1 });
    if (!start0.coefficients.some((v) => Number.isNaN(v))) {
      let c = 1;
      const g = gammaFixed === null ? start0.coefficients[c++] : gammaFixed;
      const t = thetaFixed === null ? 1 + start0.coefficients[c++] : thetaFixed;
      if (iGamma >= 0) start[iGamma] = g;
      if (iTheta >= 0) start[iTheta] = t;
      for (let e = 0; e < E; e++) {
        const logB = start0.coefficients[0] + (e > 0 ? start0.coefficients[c + e - 1] : 0);
        start[firstC + e] = logB + g * mR + t * mA;
      }
      startedFromLogLinear = true;
    }
  }
  if (!startedFromLogLinear) {
    const g = gammaFixed ?? 1;
    const t = thetaFixed ?? 0.5;
    if (iGamma >= 0) start[iGamma] = g;
    if (iTheta >= 0) start[iTheta] = t;
    for (let e = 0; e < E; e++) {
      let s = 0;
      let count = 0;
      for (let i = 0; i < n; i++) {
        if (rowEconomy[i] === e && response[i] > 0) {
          s += response[i];
          count++;
        }
      }
      start[firstC + e] = Math.log(count > 0 ? s / count : 1e-3);
    }
    warnings.push("levels-nls: too few years with positive TFP change for the log-linear start; started from gamma = 1, theta = 0.5.");
  }
  const gammaAt = (b: Float64Array): number => (iGamma >= 0 ? b[iGamma] : (gammaFixed as number));
  const thetaAt = (b: Float64Array): number => (iTheta >= 0 ? b[iTheta] : (thetaFixed as number));
  const regression = nls(
    {
      response,
      names,
      predict: (b, out) => {
        const g = gammaAt(b);
        const t = thetaAt(b);
        for (let i = 0; i < n; i++) out[i] = Math.exp(b[firstC + rowEconomy[i]] + g * cR[i] + t * cA[i]);
      },
      jacobian: (b, out) => {
        const g = gammaAt(b);
        const t = thetaAt(b);
        out.fill(0);
        for (let i = 0; i < n; i++) {
          const f = Math.exp(b[firstC + rowEconomy[i]] + g * cR[i] + t * cA[i]);
          if (iGamma >= 0) out[i + iGamma * n] = f * cR[i];
          if (iTheta >= 0) out[i + iTheta * n] = f * cA[i];
          out[i + (firstC + rowEconomy[i]) * n] = f;
        }
      },
    },
    start,
    { maxIterations: 500 },
  );
  const layout: KpfCoefficientLayout = Object.freeze({
    form: spec.form,
    gamma: iGamma,
    theta: iTheta,
    beta: -1,
    kappa: -1,
    thetaOffset: 0,
    gammaFixed,
    thetaFixed,
  });
  return {
    regression,
    layout,
    logBRows: (e, structural) => {
      const weights = new Float64Array(p);
      weights[firstC + e] = 1;
      // ln B_e = c_e - gamma mR - theta mA; the gamma/theta terms are linear only when fixed,
      // so the estimated ones enter through the offset here and through the Jacobian fix-up.
      return { offset: -structural[0] * mR - structural[1] * mA, weights };
    },
    centring: { lnR: mR, lnA: mA },
  };
}
