/**
 * Long-run implications of a knowledge production function fit, per economy: research-labour
 * growth n, steady-state growth g* = kappa n (kappa = gamma/(1 - theta), or (beta + gamma)/(1 -
 * theta - beta) with capital, or the cointegrating coefficient) with delta-method and
 * bootstrap-percentile intervals, P(theta >= 1), the regime and whether the interval spans regimes
 * (in words), half-life, discrete-time steady state, blow-up time, and on request the transition
 * path of g from today's growth (closed form and numerical integrator, which must agree) and a
 * projection of the TFP level with a fan chart from the bootstrap draws. Reuses dynamics.ts and
 * research-growth.ts. Never refits: the bootstrap is drawn once (kpf-bootstrap.ts) or passed in.
 */
import {
  type FanChart,
  type Regime,
  blowUpTime,
  classifyRegime,
  classifyRegimeInterval,
  discreteSteadyState,
  fanChart,
  halfLife,
  integrateGrowthPath,
  projectTfpLevel,
  transitionPathClosedForm,
} from "./dynamics";
import { normalQuantile, studentTQuantile } from "./distributions";
import { type KpfBootstrap, bootstrapKpf } from "./kpf-bootstrap";
import type { KpfCovariance } from "./kpf-covariance";
import type { KpfFit } from "./kpf-fit";
import type { KpfEconomySeries } from "./kpf-sample";
import type { Rng } from "./random";
import { researchGrowth } from "./research-growth";

/** A per-economy option: one value for all economies, or a value by economy code. */
export type PerEconomy<T> = T | Readonly<Record<string, T>>;

export interface ImpliedGrowthOptions {
  /** n (log points a year) instead of the spec's window: a number for all, or by economy. */
  readonly n?: PerEconomy<number>;
  /** Standard error of a given n (default 0: known). */
  readonly nStandardError?: PerEconomy<number>;
  /** Bootstrap draws already made for this fit (bootstrapKpf); otherwise drawn here when draws > 0. */
  readonly bootstrap?: KpfBootstrap | null;
  /** Number of bootstrap draws (default the spec's); 0 gives delta-method intervals only. */
  readonly draws?: number;
  /** Seeded generator: required when bootstrap draws are made here or n is uncertain. */
  readonly rng?: Rng;
  /** Today's growth g0 (log points a year); default the trailing average TFP growth over the n window. */
  readonly g0?: PerEconomy<number>;
  /** Horizon in years of the transition path and TFP projection (default 0: none). */
  readonly horizon?: number;
  /** Quantiles of the fan chart (default 0.05, 0.25, 0.5, 0.75, 0.95). */
  readonly fanQuantiles?: readonly number[];
}

/** An interval with how it was obtained. */
export interface IntervalEstimate {
  readonly lower: number;
  readonly upper: number;
  readonly method: "bootstrap-percentile" | "delta" | "t" | "fixed" | "none";
}

/** Research-labour growth n as used. */
export interface ResearchGrowthUsed {
  readonly value: number | null;
  readonly standardError: number;
  /** Degrees of freedom of n's standard error (changes in the window - 1); Infinity when given (normal). */
  readonly degreesOfFreedom: number;
  readonly source: "researchers" | "population" | "given";
  readonly method: string;
  readonly window: number | null;
  readonly t0: number | null;
  readonly t1: number | null;
}

/** Transition path of g and the implied TFP level. */
export interface TransitionPath {
  readonly times: readonly number[];
  /** g(t), closed-form logistic (dynamics.transitionPathClosedForm). */
  readonly closedForm: readonly (number | null)[];
  /** g(t), Dormand-Prince integration (dynamics.integrateGrowthPath). */
  readonly integrated: readonly (number | null)[];
  /** Largest |closed form - integrated| over the grid (the two must agree, ~1e-9 or better). */
  readonly maxDifference: number;
  /** TFP level from the last observed level along the closed-form path. */
  readonly level: readonly (number | null)[];
  /** Fan chart of the level over the bootstrap draws (null without draws). */
  readonly levelFan: FanChart | null;
  /** Fan chart of g over the bootstrap draws (null without draws). */
  readonly growthFan: FanChart | null;
  readonly warnings: readonly string[];
}

/** Long-run implications for one economy. */
export interface EconomyImpliedGrowth {
  readonly economy: string;
  readonly n: ResearchGrowthUsed;
  /** kappa n whatever the regime (may be negative or meaningless when theta >= 1). */
  readonly gStarFormula: number;
  /** Steady-state growth when the regime is converging, else null (no steady state). */
  readonly gStar: number | null;
  /** Delta-method standard error of kappa n (n's error included when it has one). */
  readonly gStarStandardError: number;
  readonly gStarDelta: IntervalEstimate;
  readonly gStarBootstrap: IntervalEstimate | null;
  /** The interval to show: bootstrap percentile when there are draws, else delta method. */
  readonly gStarInterval: IntervalEstimate;
  /** theta (theta + beta with capital): the parameter that sets the regime. */
  readonly regimeParameter: number;
  readonly regimeParameterInterval: IntervalEstimate;
  readonly gammaInterval: IntervalEstimate;
  /** Share of bootstrap draws with theta (+ beta) >= 1; null without draws or when not identified. */
  readonly pThetaGe1: number | null;
  readonly regime: Regime | "not-identified";
  readonly spansRegimes: boolean;
  /** The regime and its interval in words. */
  readonly regimeWords: string;
  readonly halfLife: { readonly years: number | null; readonly reason: string | null };
  /** Discrete-time steady state (1 + n)^kappa - 1 with 1 + n = exp(n), a per-year rate; null unless converging. */
  readonly discreteSteadyState: number | null;
  readonly g0: { readonly value: number | null; readonly source: "given" | "trailing-average" };
  /** Years until growth becomes infinite (theta > 1), from g0; null otherwise. */
  readonly blowUpTime: number | null;
  readonly path: TransitionPath | null;
  readonly bootstrapDraws: { readonly valid: number; readonly infinite: number };
  readonly warnings: readonly string[];
}

/** Result of impliedGrowth. */
export interface ImpliedGrowth {
  readonly level: number;
  readonly economies: readonly EconomyImpliedGrowth[];
  readonly bootstrap: KpfBootstrap | null;
  readonly warnings: readonly string[];
}

function perEconomy<T>(value: PerEconomy<T> | undefined, economy: string, what: string): T | undefined {
  if (value === undefined) return undefined;
  if (typeof value === "object" && value !== null && !Array.isArray(value)) {
    const v = (value as Readonly<Record<string, T>>)[economy];
    if (v === undefined) throw new RangeError(`impliedGrowth: ${what} has no value for economy ${economy}`);
    return v;
  }
  return value as T;
}

function pct(x: number): string {
  if (x === Infinity) return "+infinity";
  if (x === -Infinity) return "-infinity";
  return `${Number((100 * x).toPrecision(3))}%`;
}

function num(x: number): string {
  return Number.isFinite(x) ? String(Number(x.toPrecision(4))) : String(x);
}

/**
 * Work arrays for the per-draw loops, reused from call to call (grown when needed) so that a run
 * over many economies allocates them once. They never leave a call: results copy what they need.
 */
const scratch = { size: 0, theta: new Float64Array(0), gamma: new Float64Array(0), n: new Float64Array(0), g: new Float64Array(0) };

function workBuffers(draws: number): typeof scratch {
  if (scratch.size < draws) {
    scratch.size = draws;
    scratch.theta = new Float64Array(draws);
    scratch.gamma = new Float64Array(draws);
    scratch.n = new Float64Array(draws);
    scratch.g = new Float64Array(draws);
  }
  return scratch;
}

/**
 * Rearranges values[from..count) so that values[k] is the k-th smallest of values[0..count),
 * smaller ones before it and larger ones after it, given that every value before `from` is at most
 * every value from `from` on (Hoare's selection with median-of-three pivots; O(count - from) on
 * average, no allocation). NaN must not be present.
 */
function selectInPlace(values: Float64Array, from: number, count: number, k: number): void {
  let lo = from;
  let hi = count - 1;
  while (hi > lo) {
    const mid = (lo + hi) >>> 1;
    // median of three to values[mid]
    if (values[mid] < values[lo]) swap(values, mid, lo);
    if (values[hi] < values[lo]) swap(values, hi, lo);
    if (values[hi] < values[mid]) swap(values, hi, mid);
    const pivot = values[mid];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (values[i] < pivot) i++;
      while (values[j] > pivot) j--;
      if (i <= j) {
        swap(values, i, j);
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return;
  }
}

function swap(values: Float64Array, i: number, j: number): void {
  const t = values[i];
  values[i] = values[j];
  values[j] = t;
}

/**
 * Quantile (Hyndman & Fan type 7, R's default) at `probability` of values[0..count), infinities
 * allowed, selecting only within values[from..count) (see selectInPlace; the quantile's lower order
 * statistic must lie at or after `from`). Reorders the values in place (selection, not a full sort).
 */
function quantileInPlace(values: Float64Array, count: number, probability: number, from = 0): number {
  if (count === 0) return Number.NaN;
  const h = (count - 1) * probability;
  const lo = Math.floor(h);
  selectInPlace(values, from, count, lo);
  const a = values[lo];
  const fraction = h - lo;
  if (fraction === 0 || lo + 1 >= count) return a;
  let b = values[lo + 1];
  for (let i = lo + 2; i < count; i++) if (values[i] < b) b = values[i];
  if (a === b) return a;
  // (1 - f) a + f b with 0 < f < 1: an infinite end dominates; -infinity and +infinity together are undefined.
  if (a === -Infinity) return b === Infinity ? Number.NaN : -Infinity;
  if (b === Infinity) return Infinity;
  return a + fraction * (b - a);
}

/**
 * Equal-tailed percentile interval at `level`: the type-7 quantiles at (1 - level)/2 and
 * (1 + level)/2 of values[0..count) (the probabilities as R's boot.ci forms them, from memory);
 * the upper selection searches only from the lower quantile's order statistic on.
 */
function percentileInterval(values: Float64Array, count: number, level: number): IntervalEstimate {
  const lowerProbability = (1 - level) / 2;
  const lower = quantileInPlace(values, count, lowerProbability);
  const upper = quantileInPlace(values, count, (1 + level) / 2, Math.floor((count - 1) * lowerProbability));
  return { lower, upper, method: "bootstrap-percentile" };
}

// The per-draw loops below are small functions of their own: the engine optimises each quickly,
// and the long per-economy code around them never needs optimising.

/** Valid theta (theta + beta with capital) and gamma draws into the work arrays; counts, and draws with theta >= 1. */
function parameterDraws(
  S: Float64Array,
  draws: number,
  capital: boolean,
  thetaDraws: Float64Array,
  gammaDraws: Float64Array,
): { validTheta: number; validGamma: number; thetaGe1: number } {
  let validTheta = 0;
  let validGamma = 0;
  let thetaGe1 = 0;
  for (let d = 0; d < draws; d++) {
    const t = capital ? S[4 * d + 1] + S[4 * d + 2] : S[4 * d + 1];
    if (!Number.isNaN(t)) {
      thetaDraws[validTheta++] = t;
      if (t >= 1) thetaGe1++;
    }
    const g = S[4 * d];
    if (!Number.isNaN(g)) gammaDraws[validGamma++] = g;
  }
  return { validTheta, validGamma, thetaGe1 };
}

/** n_d = n + se(n) t_d for d < draws, t_d Student t with nu degrees of freedom (normal for nu = Infinity). */
function researchGrowthDraws(rng: Rng, n: number, se: number, nu: number, draws: number, out: Float64Array): void {
  for (let d = 0; d < draws; d++) out[d] = n + se * studentTDraw(rng, nu);
}

/**
 * g*_d = kappa_d n_d into out, +infinity when theta_d (+ beta_d) >= 1 (identified forms), failed
 * draws left out; how many were written and how many are infinite.
 */
function steadyStateDraws(
  S: Float64Array,
  draws: number,
  capital: boolean,
  identified: boolean,
  nDraws: Float64Array,
  out: Float64Array,
): { valid: number; infinite: number } {
  let valid = 0;
  let infinite = 0;
  for (let d = 0; d < draws; d++) {
    const kd = S[4 * d + 3];
    const td = capital ? S[4 * d + 1] + S[4 * d + 2] : S[4 * d + 1];
    if (Number.isNaN(kd) && !(td >= 1)) continue;
    if (identified && Number.isNaN(td)) continue;
    if (identified && td >= 1) {
      out[valid++] = Infinity;
      infinite++;
    } else {
      out[valid++] = kd * nDraws[d];
    }
  }
  return { valid, infinite };
}

/**
 * One Student t draw with nu degrees of freedom (nu = Infinity: standard normal) by Bailey's polar
 * method: (u, v) uniform in the unit disc, w = u^2 + v^2, T = u sqrt(nu (w^(-2/nu) - 1)/w)
 * (Marsaglia's polar normal u sqrt(-2 ln w / w) in the limit). No allocation.
 * Reference: R. W. Bailey (1994), "Polar generation of random variates with the t-distribution",
 * Mathematics of Computation 62(206), 779-781.
 */
function studentTDraw(rng: Rng, nu: number): number {
  for (;;) {
    const u = 2 * rng.nextFloat64() - 1;
    const v = 2 * rng.nextFloat64() - 1;
    const w = u * u + v * v;
    // w^(-2/nu) as exp(-2 ln(w)/nu): equal to Math.pow's within about 1 + |2 ln(w)/nu| units in the
    // last place (a few, but for vanishing w), at a third of its cost.
    if (w > 0 && w < 1) return nu === Infinity ? u * Math.sqrt((-2 * Math.log(w)) / w) : u * Math.sqrt((nu * (Math.exp((-2 / nu) * Math.log(w)) - 1)) / w);
  }
}

/**
 * n, its standard error and where it came from, for one economy under the spec's researchGrowth
 * (window: researchGrowth() of lib/estimation over researchers or population; standard error =
 * sd of the annualised log changes between consecutive data points in [t0, t1] / sqrt(their number)).
 */
function researchGrowthFor(fit: KpfFit, series: KpfEconomySeries, options: ImpliedGrowthOptions, warnings: string[]): ResearchGrowthUsed {
  const given = perEconomy(options.n, series.economy, "n");
  const givenSe = perEconomy(options.nStandardError, series.economy, "nStandardError") ?? 0;
  if (given !== undefined) {
    if (!Number.isFinite(given)) throw new RangeError(`impliedGrowth: n for ${series.economy} must be finite, got ${given}`);
    if (!(givenSe >= 0)) throw new RangeError(`impliedGrowth: nStandardError for ${series.economy} must be >= 0, got ${givenSe}`);
    return { value: given, standardError: givenSe, degreesOfFreedom: Infinity, source: "given", method: "given", window: null, t0: null, t1: null };
  }
  const choice = fit.spec.researchGrowth;
  if (choice.kind === "given") {
    return { value: choice.value, standardError: givenSe, degreesOfFreedom: Infinity, source: "given", method: "given in the spec", window: null, t0: null, t1: null };
  }
  const values = choice.source === "population" ? series.population : series.researchers;
  if (values === undefined) {
    warnings.push(`${series.economy}: no ${choice.source} series, so n cannot be measured.`);
    return { value: null, standardError: Number.NaN, degreesOfFreedom: Number.NaN, source: choice.source, method: choice.method, window: choice.window, t0: null, t1: null };
  }
  const r = researchGrowth(series.years, values, { window: choice.window, method: choice.method });
  for (const w of r.warnings) warnings.push(`${series.economy}: n from ${choice.source}: ${w}.`);
  let se = 0;
  let dof = Infinity;
  if (fit.spec.nUncertainty === "window" && r.n !== null && r.t0 !== null && r.t1 !== null) {
    const changes: number[] = [];
    let previous: { year: number; log: number } | null = null;
    for (let i = 0; i < series.years.length; i++) {
      const year = series.years[i];
      const v = values[i];
      if (year < r.t0 || year > r.t1 || v === null || !(v > 0)) continue;
      const log = Math.log(v);
      if (previous !== null) changes.push((log - previous.log) / (year - previous.year));
      previous = { year, log };
    }
    if (changes.length >= 2) {
      let mean = 0;
      for (const c of changes) mean += c;
      mean /= changes.length;
      let ss = 0;
      for (const c of changes) ss += (c - mean) ** 2;
      se = Math.sqrt(ss / (changes.length - 1) / changes.length);
      dof = changes.length - 1;
    } else {
      se = Number.NaN;
      warnings.push(`${series.economy}: fewer than 2 changes of ${choice.source} in the n window, so n's sampling error is unknown.`);
    }
  }
  return { value: r.n, standardError: se, degreesOfFreedom: dof, source: choice.source, method: choice.method, window: choice.window, t0: r.t0, t1: r.t1 };
}

/**
 * Long-run implications of a KPF fit for each economy in it (see the module comment).
 * g* = kappa n; delta-method variance n^2 Var(kappa) + kappa^2 Var(n), where Var(kappa) comes from
 * the covariance through the gradient (1/(1 - theta), gamma/(1 - theta)^2) of kappa in (gamma,
 * theta), i.e. for g* the gradient (n/(1 - theta), gamma n/(1 - theta)^2) and gamma/(1 - theta)
 * for n; normal quantiles. Bootstrap: per draw g*_d = kappa_d n_d with n_d = n + se(n) t_d, t_d a
 * Student t draw with (changes in the n window - 1) degrees of freedom (normal for a given n), and
 * +infinity when theta_d (+ beta_d) >= 1 (no steady state); percentile interval (type 7);
 * P(theta >= 1) = share of draws with theta_d (+ beta_d) >= 1. Regime of the point estimate with
 * the spec's knife-edge tolerance, and of the interval (bootstrap percentile, else t) through
 * classifyRegimeInterval. Half-life ln 2/(gamma n); discrete steady state (1 + n)^kappa - 1;
 * blow-up time from g0 when theta > 1. With a horizon: closed-form and integrated paths of g from
 * g0 (they must agree), TFP level from the last observation, fan charts over the draws.
 * Flags in words: interval spanning regimes, g* interval including negative values or unbounded,
 * no steady state, negative n, n measured over a short window.
 * Throws RangeError for an unestimated fit, a covariance of another fit, draws > 0 (or an uncertain
 * n) without an rng, a non-finite given n or g0, or a negative horizon.
 * Example: for gamma = 1, theta = -2.1 (Bloom et al. 2020 from memory) and n = 0.043:
 *   gStar = 0.043/3.1 = 0.013870967741935483.
 * Reference: Jones (1995), JPE 103(4); DOMAIN.md sections 2 and 4 (delta method gradient);
 * B. Efron (1981), "Nonparametric standard errors and confidence intervals", Canadian J. Statistics 9(2), citation from memory (percentile intervals); Hyndman & Fan (1996) (type 7 quantiles).
 */
export function impliedGrowth(fit: KpfFit, cov: KpfCovariance, options: ImpliedGrowthOptions = {}): ImpliedGrowth {
  if (!fit.estimated) throw new RangeError("impliedGrowth: the fit has no estimate");
  if (cov.names !== fit.parameterNames || cov.matrix.rows !== fit.parameterValues.length) {
    throw new RangeError("impliedGrowth: the covariance belongs to another fit (its parameter names differ)");
  }
  const horizon = options.horizon ?? 0;
  if (!(Number.isInteger(horizon) && horizon >= 0)) throw new RangeError(`impliedGrowth: horizon must be a non-negative integer, got ${horizon}`);
  const spec = fit.spec;
  const level = spec.level;
  const form = spec.form;
  const warnings: string[] = [];
  const drawsWanted = options.draws ?? spec.bootstrap.draws;
  let bootstrap: KpfBootstrap | null = options.bootstrap ?? null;
  if (bootstrap === null && drawsWanted > 0) {
    if (!options.rng) throw new RangeError("impliedGrowth: bootstrap draws need a seeded rng (options.rng)");
    bootstrap = bootstrapKpf(fit, { draws: drawsWanted, rng: options.rng });
  }
  if (bootstrap !== null) for (const w of bootstrap.warnings) warnings.push(w);
  const p = cov.matrix.rows;
  const V = cov.matrix.data;
  const { gamma, theta, beta, kappa } = fit.parameters;
  const capital = form === "capital-augmented";
  const identified = !(form === "cointegration" && spec.restrictions.gamma === null && spec.restrictions.theta === null);
  const regimeParameter = capital ? theta + beta : theta;
  const varKappa = V[3 + 3 * p];
  const zNormal = normalQuantile((1 + level) / 2);
  const df = cov.degreesOfFreedom;
  const tQuantile = df > 0 ? studentTQuantile((1 + level) / 2, df) : Number.NaN;

  // Bootstrap draws of the regime parameter, gamma, kappa (shared by every economy of the fit).
  const draws = bootstrap?.draws ?? 0;
  const S = bootstrap?.structural;
  const work = workBuffers(draws);
  const thetaDraws = work.theta;
  const gammaDraws = work.gamma;
  const { validTheta, validGamma, thetaGe1 } = S ? parameterDraws(S, draws, capital, thetaDraws, gammaDraws) : { validTheta: 0, validGamma: 0, thetaGe1: 0 };
  const seTheta = capital ? Math.sqrt(V[1 + 1 * p] + V[2 + 2 * p] + 2 * V[1 + 2 * p]) : Math.sqrt(V[1 + 1 * p]);
  const seGamma = Math.sqrt(V[0]);
  const fixedTheta = spec.restrictions.theta !== null && !capital;
  const regimeParameterInterval: IntervalEstimate = fixedTheta
    ? { lower: regimeParameter, upper: regimeParameter, method: "fixed" }
    : !identified
      ? { lower: Number.NaN, upper: Number.NaN, method: "none" }
      : validTheta > 0
        ? percentileInterval(thetaDraws, validTheta, level)
        : { lower: regimeParameter - tQuantile * seTheta, upper: regimeParameter + tQuantile * seTheta, method: "t" };
  const gammaInterval: IntervalEstimate =
    spec.restrictions.gamma !== null
      ? { lower: gamma, upper: gamma, method: "fixed" }
      : !identified
        ? { lower: Number.NaN, upper: Number.NaN, method: "none" }
        : validGamma > 0
          ? percentileInterval(gammaDraws, validGamma, level)
          : { lower: gamma - tQuantile * seGamma, upper: gamma + tQuantile * seGamma, method: "t" };
  const pThetaGe1 = !identified ? null : fixedTheta ? (regimeParameter >= 1 ? 1 : 0) : validTheta > 0 ? thetaGe1 / validTheta : null;

  const tolerance = spec.knifeEdgeTolerance;
  const regime: Regime | "not-identified" = identified && Number.isFinite(regimeParameter) ? classifyRegime(regimeParameter, { tolerance }) : "not-identified";
  const thetaName = capital ? "theta + beta" : "theta";
  let spansRegimes = false;
  let regimeWords: string;
  let intervalSentence = "";
  if (regime === "not-identified") {
    regimeWords = "The regime is not identified: the cointegration form estimates kappa = gamma/(1 - theta) only and presumes a balanced growth path (theta below 1).";
  } else {
    const lo = regimeParameterInterval.lower;
    const hi = regimeParameterInterval.upper;
    const intervalWords = Number.isNaN(lo) || Number.isNaN(hi) ? null : classifyRegimeInterval(lo, hi, { tolerance });
    spansRegimes = intervalWords?.spansRegimes ?? false;
    intervalSentence = intervalWords ? intervalWords.words.replace(/theta/g, thetaName) : "";
    regimeWords =
      `${thetaName} = ${num(regimeParameter)}: ${regime}${regime === "knife-edge" ? ` (within ${tolerance} of 1)` : ""}. ` +
      (intervalWords ? `${Math.round(level * 100)}% interval: ${intervalWords.words.replace(/theta/g, thetaName)}` : "No interval for the regime.");
  }

  const economies: EconomyImpliedGrowth[] = [];
  const nDraws = work.n;
  const gDraws = work.g;
  for (let e = 0; e < fit.economies.length; e++) {
    const series = fit.data[e];
    const economy = series.economy;
    const w: string[] = [];
    const n = researchGrowthFor(fit, series, options, w);
    const nValue = n.value ?? Number.NaN;
    const nSe = n.standardError;
    const gStarFormula = kappa * nValue;
    const converging = regime === "converging" || regime === "not-identified";
    const gStar = converging && Number.isFinite(gStarFormula) ? gStarFormula : null;
    const gStarSe = Math.sqrt(nValue * nValue * varKappa + (Number.isFinite(nSe) ? kappa * kappa * nSe * nSe : 0));
    const gStarDelta: IntervalEstimate =
      gStar !== null && Number.isFinite(gStarSe)
        ? { lower: gStar - zNormal * gStarSe, upper: gStar + zNormal * gStarSe, method: "delta" }
        : { lower: Number.NaN, upper: Number.NaN, method: "none" };

    // Bootstrap g*: preallocated arrays, no allocation per draw.
    let gStarBootstrap: IntervalEstimate | null = null;
    let valid = 0;
    let infinite = 0;
    if (S && n.value !== null) {
      const uncertainN = nSe > 0 && Number.isFinite(nSe);
      if (uncertainN && !options.rng) throw new RangeError("impliedGrowth: an uncertain n needs a seeded rng (options.rng) to draw it");
      if (uncertainN) researchGrowthDraws(options.rng as Rng, nValue, nSe, n.degreesOfFreedom, draws, nDraws);
      else nDraws.fill(nValue, 0, draws);
      const counts = steadyStateDraws(S, draws, capital, identified, nDraws, gDraws);
      valid = counts.valid;
      infinite = counts.infinite;
      if (valid > 0) {
        gStarBootstrap = percentileInterval(gDraws, valid, level);
      }
    }
    const gStarInterval = gStarBootstrap ?? gStarDelta;

    // Flags in words.
    const label = `${economy}:`;
    if (n.value === null) w.push(`${label} n is unknown, so g* cannot be computed.`);
    else if (n.value < 0) {
      w.push(`${label} research labour shrinks (n = ${pct(n.value)} a year): the formula gives a negative g*; in the model growth decays towards zero instead.`);
    }
    if (regime === "knife-edge" || regime === "explosive") {
      w.push(`${label} no steady-state growth rate: ${thetaName} = ${num(regimeParameter)} is in the ${regime} regime${regime === "explosive" ? " (growth accelerates without bound)" : " (growth scales with research effort)"}.`);
    }
    if (spansRegimes) w.push(`${label} the ${Math.round(level * 100)}% interval of ${thetaName} spans regimes. ${intervalSentence}`);
    if (gStarInterval.method !== "none") {
      if (gStarInterval.upper === Infinity) {
        w.push(`${label} ${infinite} of ${valid} bootstrap draws have ${thetaName} >= 1 (no steady state), so the upper end of the g* interval is unbounded.`);
      }
      if (gStarInterval.lower < 0) {
        w.push(`${label} the ${Math.round(level * 100)}% interval of g* (${pct(gStarInterval.lower)} to ${pct(gStarInterval.upper)}) includes negative values: the data do not pin down even the sign of long-run growth.`);
      }
    }

    // Dynamics.
    const basic = form !== "capital-augmented" && Number.isFinite(gamma) && Number.isFinite(theta);
    const hl = basic && Number.isFinite(nValue) ? halfLife({ gamma, n: nValue }) : { years: null, reason: basic ? "n is unknown" : "gamma and theta are not both identified, or the form has capital" };
    const discrete = basic && regime === "converging" && Number.isFinite(nValue) && nValue > -1 ? discreteSteadyState({ gamma, theta, n: Math.expm1(nValue) }) : null;
    const givenG0 = perEconomy(options.g0, economy, "g0");
    let g0: number | null;
    if (givenG0 !== undefined) {
      if (!Number.isFinite(givenG0)) throw new RangeError(`impliedGrowth: g0 for ${economy} must be finite, got ${givenG0}`);
      g0 = givenG0;
    } else {
      const window = spec.researchGrowth.kind === "window" ? spec.researchGrowth.window : 10;
      g0 = researchGrowth(series.years, series.tfp, { window }).n;
    }
    const g0Source = givenG0 !== undefined ? ("given" as const) : ("trailing-average" as const);
    if (g0 !== null && !(g0 > 0)) w.push(`${label} today's TFP growth g0 = ${pct(g0)} is not positive: no transition path or blow-up time.`);
    const g0Usable = g0 !== null && g0 > 0 ? g0 : null;
    const blowUp = basic && g0Usable !== null && theta > 1 && Number.isFinite(nValue) ? blowUpTime({ gamma, theta, n: nValue, g0: g0Usable }) : null;
    let path: TransitionPath | null = null;
    if (horizon > 0 && basic && g0Usable !== null && Number.isFinite(nValue)) {
      path = transition(series, { gamma, theta, n: nValue, g0: g0Usable, horizon }, S, nDraws, draws, identified, options.fanQuantiles);
    }
    economies.push(
      Object.freeze({
        economy,
        n: Object.freeze(n),
        gStarFormula,
        gStar,
        gStarStandardError: gStarSe,
        gStarDelta: Object.freeze(gStarDelta),
        gStarBootstrap: gStarBootstrap ? Object.freeze(gStarBootstrap) : null,
        gStarInterval: Object.freeze(gStarInterval),
        regimeParameter,
        regimeParameterInterval: Object.freeze(regimeParameterInterval),
        gammaInterval: Object.freeze(gammaInterval),
        pThetaGe1,
        regime,
        spansRegimes,
        regimeWords,
        halfLife: Object.freeze(hl),
        discreteSteadyState: discrete,
        g0: Object.freeze({ value: g0, source: g0Source }),
        blowUpTime: blowUp,
        path,
        bootstrapDraws: Object.freeze({ valid, infinite }),
        warnings: Object.freeze(w),
      }),
    );
  }
  return Object.freeze({ level, economies: Object.freeze(economies), bootstrap, warnings: Object.freeze(warnings) });
}

function transition(
  series: KpfEconomySeries,
  point: { gamma: number; theta: number; n: number; g0: number; horizon: number },
  S: Float64Array | undefined,
  nDraws: Float64Array,
  draws: number,
  identified: boolean,
  quantiles: readonly number[] | undefined,
): TransitionPath {
  const { gamma, theta, n, g0, horizon } = point;
  const closed = transitionPathClosedForm({ gamma, theta, n, g0, years: horizon, step: 1 });
  const integrated = integrateGrowthPath({ gamma, theta, n, g0, years: horizon, step: 1 });
  let maxDifference = 0;
  for (let t = 0; t < closed.growth.length; t++) {
    const a = closed.growth[t];
    const b = integrated.growth[t];
    if (a !== null && b !== null) maxDifference = Math.max(maxDifference, Math.abs(a - b));
  }
  let A0 = Number.NaN;
  for (let i = series.tfp.length - 1; i >= 0; i--) {
    const v = series.tfp[i];
    if (v !== null) {
      A0 = v;
      break;
    }
  }
  const warnings = [...closed.warnings, ...integrated.warnings.filter((w) => !closed.warnings.includes(w))];
  const level = Number.isFinite(A0) ? projectTfpLevel({ A0, growth: closed.growth }).level : closed.growth.map(() => null);
  let levelFan: FanChart | null = null;
  let growthFan: FanChart | null = null;
  if (S && draws > 0 && identified && Number.isFinite(A0)) {
    const growthPaths: (number | null)[][] = [];
    const levelPaths: (number | null)[][] = [];
    for (let d = 0; d < draws; d++) {
      const gd = S[4 * d];
      const td = S[4 * d + 1];
      if (!Number.isFinite(gd) || !Number.isFinite(td)) continue;
      const pathD = transitionPathClosedForm({ gamma: gd, theta: td, n: nDraws[d], g0, years: horizon, step: 1 });
      growthPaths.push(pathD.growth);
      levelPaths.push(projectTfpLevel({ A0, growth: pathD.growth }).level);
    }
    if (growthPaths.length > 0) {
      const q = quantiles ?? [0.05, 0.25, 0.5, 0.75, 0.95];
      growthFan = fanChart(growthPaths, q, { missing: "infinite" });
      levelFan = fanChart(levelPaths, q, { missing: "infinite" });
    }
  }
  return Object.freeze({
    times: closed.times,
    closedForm: closed.growth,
    integrated: integrated.growth,
    maxDifference,
    level,
    levelFan,
    growthFan,
    warnings: Object.freeze(warnings),
  });
}
