/**
 * Long-run growth and transition dynamics of the knowledge production function
 *
 *     dA/dt = B * R^gamma * A^theta,   R growing at rate n,
 *
 * whose growth rate g = (dA/dt)/A obeys the logistic (Bernoulli) equation
 *
 *     dg/dt = a*g - b*g^2,   a = gamma*n,   b = 1 - theta.
 *
 * Symbols used throughout: gamma (elasticity of idea output to research effort), theta (returns to
 * the existing stock of knowledge), n (growth rate of research labour), g0 (growth of A at t = 0),
 * a = gamma*n, b = 1 - theta, g* = a/b (the steady state when theta < 1).
 *
 * Pure functions; inputs are never mutated. Misuse throws a RangeError naming the function and the
 * argument; numerical trouble (blow-up, overflow) is returned as warnings.
 */

// ---------------------------------------------------------------------------------------------
// Shared validation
// ---------------------------------------------------------------------------------------------

function requireFinite(where: string, name: string, value: number): void {
  if (typeof value !== "number" || !Number.isFinite(value)) {
    throw new RangeError(`${where}: ${name} must be a finite number, got ${String(value)}`);
  }
}

function requirePositive(where: string, name: string, value: number, why = ""): void {
  requireFinite(where, name, value);
  if (!(value > 0)) throw new RangeError(`${where}: ${name} must be positive, got ${value}${why}`);
}

const G0_WHY = " (growth of A is B R^gamma A^(theta-1) > 0 in this model)";

// ---------------------------------------------------------------------------------------------
// Regimes
// ---------------------------------------------------------------------------------------------

/** Names used in the trade for the three regimes of theta. */
export type Regime = "converging" | "knife-edge" | "explosive";

/** Default half-width of the knife-edge band around theta = 1: numerical only (1e-9). */
export const DEFAULT_REGIME_TOLERANCE = 1e-9;

function regimeTolerance(where: string, options?: { tolerance?: number }): number {
  const tolerance = options?.tolerance ?? DEFAULT_REGIME_TOLERANCE;
  requireFinite(where, "tolerance", tolerance);
  if (tolerance < 0) throw new RangeError(`${where}: tolerance must be >= 0, got ${tolerance}`);
  return tolerance;
}

/**
 * Regime of the returns to knowledge theta.
 * converging when theta < 1 - tolerance, knife-edge when |theta - 1| <= tolerance, explosive when
 * theta > 1 + tolerance. The default tolerance (1e-9) is numerical only; pass a wider band (e.g. a
 * standard error) to call "knife-edge" anything the data cannot tell from 1.
 * Throws RangeError for a non-finite theta or a negative tolerance.
 * Example: classifyRegime(0.5) -> "converging"; classifyRegime(1.02, { tolerance: 0.05 }) -> "knife-edge"
 * Reference: Jones (1995), "R&D-Based Models of Economic Growth", JPE 103(4).
 */
export function classifyRegime(theta: number, options?: { tolerance?: number }): Regime {
  const where = "classifyRegime";
  requireFinite(where, "theta", theta);
  const tolerance = regimeTolerance(where, options);
  if (theta < 1 - tolerance) return "converging";
  if (theta > 1 + tolerance) return "explosive";
  return "knife-edge";
}

const REGIME_ORDER: readonly Regime[] = ["converging", "knife-edge", "explosive"];

const REGIME_WORDS: Readonly<Record<Regime, string>> = {
  converging: "growth settles at a steady rate set by research-labour growth (theta below 1)",
  "knife-edge": "growth scales with the size of research effort and has no steady state (theta at 1)",
  explosive: "growth accelerates without bound (theta above 1)",
};

/** What the regime classification of an interval for theta says. */
export interface RegimeIntervalClassification {
  /** Regime of the lower end. */
  lower: Regime;
  /** Regime of the upper end. */
  upper: Regime;
  /** Every regime the interval touches, in order converging, knife-edge, explosive. */
  regimes: Regime[];
  /** True when the interval touches more than one regime. */
  spansRegimes: boolean;
  /** One sentence for the screen. */
  words: string;
}

/**
 * Regime classification of an interval [lo, hi] for theta (e.g. a 90% bootstrap interval).
 * Each end is classified as in classifyRegime; the interval spans regimes when the ends differ.
 * Infinite ends are allowed (a one-sided interval). Throws RangeError for NaN ends, lo > hi or a
 * negative tolerance.
 * Example: classifyRegimeInterval(0.6, 1.3).regimes -> ["converging", "knife-edge", "explosive"]
 * Reference: Jones (1995), JPE 103(4); percentile intervals as in Efron & Tibshirani (1993).
 */
export function classifyRegimeInterval(
  lo: number,
  hi: number,
  options?: { tolerance?: number },
): RegimeIntervalClassification {
  const where = "classifyRegimeInterval";
  if (Number.isNaN(lo) || Number.isNaN(hi)) throw new RangeError(`${where}: interval ends must be numbers, got [${lo}, ${hi}]`);
  if (lo > hi) throw new RangeError(`${where}: lower end ${lo} is above upper end ${hi}`);
  const tolerance = regimeTolerance(where, options);
  const classify = (x: number): Regime => (x < 1 - tolerance ? "converging" : x > 1 + tolerance ? "explosive" : "knife-edge");
  const lower = classify(lo);
  const upper = classify(hi);
  const from = REGIME_ORDER.indexOf(lower);
  const to = REGIME_ORDER.indexOf(upper);
  const regimes = REGIME_ORDER.slice(from, to + 1);
  const spansRegimes = regimes.length > 1;
  const range = `theta between ${formatNumber(lo)} and ${formatNumber(hi)}`;
  let words: string;
  if (!spansRegimes) {
    words = `${capitalise(lower)} throughout (${range}): ${REGIME_WORDS[lower]}.`;
  } else if (lower === "converging" && upper === "explosive") {
    words = `The interval spans every regime (${range}): the data cannot tell whether growth settles, scales with research effort or explodes.`;
  } else {
    words = `The interval spans ${regimes.join(" and ")} (${range}): the data cannot tell which regime holds.`;
  }
  return { lower, upper, regimes, spansRegimes, words };
}

function formatNumber(x: number): string {
  return Number.isFinite(x) ? String(Number(x.toPrecision(4))) : x > 0 ? "+infinity" : "-infinity";
}

function capitalise(s: string): string {
  return s.charAt(0).toUpperCase() + s.slice(1);
}

// ---------------------------------------------------------------------------------------------
// Steady states
// ---------------------------------------------------------------------------------------------

/** Parameters of the knowledge production function with research-labour growth n. */
export interface GrowthParameters {
  gamma: number;
  theta: number;
  n: number;
}

/**
 * Steady-state (long-run) growth of knowledge, g* = gamma * n / (1 - theta).
 * Throws RangeError when theta >= 1 (no steady state: knife-edge or explosive regime; use
 * longRunGrowth for a result that describes the regime instead) or for non-finite inputs.
 * Example: steadyStateGrowth({ gamma: 0.5, theta: 0.5, n: 0.01 }) -> 0.01
 * Reference: Jones (1995), "R&D-Based Models of Economic Growth", JPE 103(4).
 */
export function steadyStateGrowth({ gamma, theta, n }: GrowthParameters): number {
  const where = "steadyStateGrowth";
  requireFinite(where, "gamma", gamma);
  requireFinite(where, "theta", theta);
  requireFinite(where, "n", n);
  if (theta >= 1) {
    throw new RangeError(
      `${where}: theta = ${theta} >= 1, so there is no steady state (${theta === 1 ? "knife-edge" : "explosive"} regime); use longRunGrowth to describe it`,
    );
  }
  return (gamma * n) / (1 - theta);
}

/**
 * Steady-state growth with capital in the idea production function, dA/dt = B K^beta R^gamma A^theta,
 * and capital growing at g_A + n: g* = (beta + gamma) * n / (1 - theta - beta).
 * Throws RangeError when theta + beta >= 1 (no steady state) or for non-finite inputs.
 * Example: capitalAugmentedSteadyStateGrowth({ gamma: 0.5, theta: 0.3, beta: 0.2, n: 0.01 }) -> 0.014
 * Reference: derived in DOMAIN.md section 2 [computed] from the balanced-growth condition
 *   beta*(g + n) + gamma*n + (theta - 1)*g = 0.
 */
export function capitalAugmentedSteadyStateGrowth({ gamma, theta, beta, n }: GrowthParameters & { beta: number }): number {
  const where = "capitalAugmentedSteadyStateGrowth";
  requireFinite(where, "gamma", gamma);
  requireFinite(where, "theta", theta);
  requireFinite(where, "beta", beta);
  requireFinite(where, "n", n);
  if (theta + beta >= 1) {
    throw new RangeError(`${where}: theta + beta = ${theta + beta} >= 1, so there is no steady state`);
  }
  return ((beta + gamma) * n) / (1 - theta - beta);
}

/**
 * Steady-state growth from the cointegration view: on the balanced path ln A = c + kappa ln R, so
 * g* = kappa * n (kappa = gamma / (1 - theta) when it comes from the structural parameters).
 * Throws RangeError for non-finite inputs.
 * Example: cointegrationSteadyStateGrowth({ kappa: 1, n: 0.01 }) -> 0.01
 * Reference: Ha & Howitt (2007), JMCB; Kruse-Andersen (2023), Oxford Bulletin 85(5).
 */
export function cointegrationSteadyStateGrowth({ kappa, n }: { kappa: number; n: number }): number {
  const where = "cointegrationSteadyStateGrowth";
  requireFinite(where, "kappa", kappa);
  requireFinite(where, "n", n);
  return kappa * n;
}

/** Where growth goes in the long run, by regime. */
export interface LongRunGrowth {
  regime: Regime;
  /**
   * The long-run limit of g when the parameters alone pin it down: gamma n/(1 - theta) when
   * converging with gamma n > 0; 0 when g decays to zero (gamma n <= 0 while converging, or
   * gamma n < 0 at the knife-edge); null otherwise (no steady state, or it depends on g0).
   */
  gStar: number | null;
  /** gamma / (1 - theta), the long-run elasticity of A to R; null unless converging. */
  kappa: number | null;
  /** One sentence for the screen. */
  words: string;
  warnings: string[];
}

/**
 * Long-run growth of knowledge with its regime, never throwing on theta >= 1.
 * Regime from classifyRegime(theta, { tolerance }); converging: g -> gamma n/(1 - theta) when
 * gamma n > 0 and g -> 0 when gamma n <= 0 (g stays positive, so a negative formula value is never
 * reached); knife-edge: g grows like exp(gamma n t) (n > 0), stays at g0 (n = 0) or decays (n < 0);
 * explosive: finite-time blow-up (or, with gamma n < 0, blow-up or decay depending on g0).
 * Throws RangeError for non-finite inputs or a negative tolerance.
 * Example: longRunGrowth({ gamma: 0.5, theta: 0.5, n: 0.01 }).gStar -> 0.01
 * Reference: Jones (1995), JPE 103(4); dynamics as in DOMAIN.md section 2 [computed].
 */
export function longRunGrowth(params: GrowthParameters & { tolerance?: number }): LongRunGrowth {
  const where = "longRunGrowth";
  const { gamma, theta, n } = params;
  requireFinite(where, "gamma", gamma);
  requireFinite(where, "theta", theta);
  requireFinite(where, "n", n);
  const regime = classifyRegime(theta, { tolerance: regimeTolerance(where, params) });
  const a = gamma * n;
  const warnings: string[] = [];
  if (gamma <= 0) warnings.push(`gamma = ${gamma} is not positive: more research would not raise idea output`);
  if (regime === "converging") {
    const formula = a / (1 - theta);
    const kappa = gamma / (1 - theta);
    if (a > 0) {
      return { regime, gStar: formula, kappa, words: `Growth converges to ${percent(formula)} a year.`, warnings };
    }
    if (a < 0) {
      warnings.push(`gamma n = ${a} < 0: growth decays towards zero; the formula value ${formula} is never reached because g stays positive`);
    }
    return { regime, gStar: 0, kappa, words: "Growth decays towards zero: research effort does not grow.", warnings };
  }
  if (regime === "knife-edge") {
    if (a > 0) {
      return { regime, gStar: null, kappa: null, words: "No steady state: growth rises with the scale of research effort.", warnings };
    }
    if (a === 0) {
      return { regime, gStar: null, kappa: null, words: "Growth stays at its current level: constant research effort, constant growth.", warnings };
    }
    return { regime, gStar: 0, kappa: null, words: "Growth decays towards zero as research effort shrinks.", warnings };
  }
  if (a >= 0) {
    return { regime, gStar: null, kappa: null, words: "No steady state: growth explodes in finite time.", warnings };
  }
  return {
    regime,
    gStar: null,
    kappa: null,
    words: `No steady state: growth explodes in finite time if it starts above ${percent(a / (1 - theta))} a year, and decays towards zero below it.`,
    warnings,
  };
}

function percent(x: number): string {
  return `${Number((100 * x).toPrecision(3))}%`;
}

/**
 * Half-life of the gap to the steady state, ln 2 / (gamma n).
 * The gap 1/g - 1/g* shrinks exactly like exp(-gamma n t) (the law of motion is logistic), so this
 * is exact for that gap and the asymptotic half-life of g - g* near g*. It does not depend on theta.
 * years is null, with a reason, when gamma n <= 0 (no convergence to a positive steady state).
 * Throws RangeError for non-finite inputs.
 * Example: halfLife({ gamma: 0.5, n: 0.01 }) -> { years: 138.62943611198907, reason: null }
 * Reference: DOMAIN.md section 2 [computed]; logistic solution of dg/dt = a g - b g^2.
 */
export function halfLife({ gamma, n }: { gamma: number; n: number }): { years: number | null; reason: string | null } {
  const where = "halfLife";
  requireFinite(where, "gamma", gamma);
  requireFinite(where, "n", n);
  const a = gamma * n;
  if (a > 0) return { years: Math.LN2 / a, reason: null };
  return {
    years: null,
    reason: a === 0 ? "gamma n = 0: there is no positive steady state to converge to" : `gamma n = ${a} < 0: growth decays towards zero, not to a steady state`,
  };
}

/**
 * Halving time of a quantity declining at a steady rate: ln 2 / rate with continuous compounding,
 * ln 2 / -ln(1 - rate) with annual compounding (e.g. research productivity falling 5% a year).
 * Throws RangeError unless 0 < rate (and rate < 1 for annual compounding).
 * Example: halvingTime(0.05) -> 13.862943611198904; halvingTime(0.05, { compounding: "annual" }) -> 13.513407333964885
 * Reference: Bloom, Jones, Van Reenen & Webb (2020), AER 110(4) report research productivity halving every 13 years.
 */
export function halvingTime(rate: number, options?: { compounding?: "continuous" | "annual" }): number {
  const where = "halvingTime";
  requirePositive(where, "rate", rate);
  if ((options?.compounding ?? "continuous") === "continuous") return Math.LN2 / rate;
  if (rate >= 1) throw new RangeError(`${where}: an annual decline rate must be below 1, got ${rate}`);
  return -Math.LN2 / Math.log1p(-rate);
}

// ---------------------------------------------------------------------------------------------
// Continuous-time paths
// ---------------------------------------------------------------------------------------------

/** A growth path on a time grid (t in years from the start). */
export interface GrowthPath {
  /** Years from the start: 0, step, 2 step, ..., years. */
  times: number[];
  /** g(t); null from the blow-up time on (or where g left the range of doubles). */
  growth: (number | null)[];
  regime: Regime;
  /** Time at which g becomes infinite, or null if it stays finite over the horizon. */
  blowUpTime: number | null;
  warnings: string[];
}

/** Input of transitionPathClosedForm: constant n. */
export interface ClosedFormPathInput extends GrowthParameters {
  /** Growth of A at t = 0 (positive). */
  g0: number;
  /** Horizon in years (positive). */
  years: number;
  /** Output interval in years; years must be a whole number of steps. Default 1. */
  step?: number;
}

const MAX_GRID_POINTS = 1_000_000;

function timeGrid(where: string, years: number, step: number): number[] {
  requirePositive(where, "years", years);
  requirePositive(where, "step", step);
  const count = Math.round(years / step);
  if (count < 1 || Math.abs(count * step - years) > 1e-9 * Math.max(1, years)) {
    throw new RangeError(`${where}: years = ${years} is not a whole number of steps of ${step}`);
  }
  if (count + 1 > MAX_GRID_POINTS) throw new RangeError(`${where}: ${count + 1} grid points exceed the limit of ${MAX_GRID_POINTS}`);
  const times = new Array<number>(count + 1);
  for (let k = 0; k <= count; k++) times[k] = k === count ? years : k * step;
  return times;
}

/**
 * Closed-form g(t) for dg/dt = a g - b g^2 with a = gamma n, b = 1 - theta, g(0) = g0, any signs.
 * Returns null when the path has blown up by t: the denominator is <= 0, or so close to 0 that
 * rounding cannot tell it from the singularity (below 1e-13 of its terms), or g overflows.
 * Forms chosen for stability: a > 0: g0 / (exp(-a t) + b g0 (1 - exp(-a t))/a);
 * a < 0: g0 exp(a t) / (1 + b g0 expm1(a t)/a); a = 0: g0 / (1 + b g0 t).
 */
function closedFormGrowth(a: number, b: number, g0: number, t: number): number | null {
  let head: number;
  let tail: number;
  let numerator: number;
  if (a > 0) {
    head = Math.exp(-a * t);
    tail = (b * g0 * -Math.expm1(-a * t)) / a;
    numerator = g0;
  } else if (a < 0) {
    head = 1;
    tail = (b * g0 * Math.expm1(a * t)) / a;
    numerator = g0 * Math.exp(a * t);
  } else {
    head = 1;
    tail = b * g0 * t;
    numerator = g0;
  }
  const denominator = head + tail;
  if (!(denominator > 1e-13 * Math.max(Math.abs(head), Math.abs(tail)))) return null;
  const g = numerator / denominator;
  return Number.isFinite(g) ? g : null;
}

/**
 * Transition path of knowledge growth in closed form.
 * With a = gamma n and b = 1 - theta, dg/dt = a g - b g^2 is a Bernoulli equation (1/g is linear),
 * so g(t) = g0 exp(a t) / (1 + b g0 (exp(a t) - 1)/a); for theta < 1 and a > 0 this is the logistic
 * g(t) = g* / (1 + ((g* - g0)/g0) exp(-a t)), g* = a/b; for n = 0, g(t) = g0 / (1 + b g0 t).
 * For theta > 1 the path blows up at blowUpTime; growth is null from then on, with a warning.
 * Throws RangeError for non-finite parameters, g0 <= 0, years or step <= 0, or years not a whole
 * number of steps.
 * Example: transitionPathClosedForm({ gamma: 0.5, theta: 0.5, n: 0.01, g0: 0.03, years: 100, step: 100 }).growth
 *   -> [0.03, 0.01678848878594485]
 * Reference: DOMAIN.md section 2 [computed]; Jones (1995), JPE 103(4) for the model.
 */
export function transitionPathClosedForm(input: ClosedFormPathInput): GrowthPath {
  const where = "transitionPathClosedForm";
  const { gamma, theta, n, g0 } = input;
  requireFinite(where, "gamma", gamma);
  requireFinite(where, "theta", theta);
  requireFinite(where, "n", n);
  requirePositive(where, "g0", g0, G0_WHY);
  const times = timeGrid(where, input.years, input.step ?? 1);
  const a = gamma * n;
  const b = 1 - theta;
  const growth = times.map((t) => closedFormGrowth(a, b, g0, t));
  const tStar = blowUpTime({ gamma, theta, n, g0 });
  const warnings: string[] = [];
  const blowUpInHorizon = tStar !== null && tStar <= input.years ? tStar : null;
  if (blowUpInHorizon !== null) warnings.push(`growth becomes infinite at t = ${blowUpInHorizon.toPrecision(6)} years; later values are null`);
  const firstNull = growth.indexOf(null);
  if (firstNull >= 0 && blowUpInHorizon === null) warnings.push(`growth leaves the range of doubles at t = ${times[firstNull]}; later values are null`);
  return { times, growth, regime: classifyRegime(theta), blowUpTime: blowUpInHorizon, warnings };
}

/**
 * Blow-up time of knowledge growth when theta > 1:
 * t* = (1/a) ln(1 + a / ((theta - 1) g0)) with a = gamma n; with a = 0, t* = 1 / ((theta - 1) g0).
 * null when theta <= 1 (no finite-time blow-up), and when a < 0 and g0 lies at or below the unstable
 * threshold a / (1 - theta) (then growth decays towards zero instead).
 * Throws RangeError for non-finite parameters or g0 <= 0.
 * Example: blowUpTime({ gamma: 0.5, theta: 1.25, n: 0, g0: 0.02 }) -> 200   (1 / (0.25 * 0.02))
 * Reference: DOMAIN.md section 2 [computed], from the Bernoulli solution of dg/dt = a g + (theta - 1) g^2.
 */
export function blowUpTime({ gamma, theta, n, g0 }: GrowthParameters & { g0: number }): number | null {
  const where = "blowUpTime";
  requireFinite(where, "gamma", gamma);
  requireFinite(where, "theta", theta);
  requireFinite(where, "n", n);
  requirePositive(where, "g0", g0, G0_WHY);
  if (theta <= 1) return null;
  const a = gamma * n;
  const c = (theta - 1) * g0;
  if (a === 0) return 1 / c;
  const x = a / c;
  if (!(x > -1)) return null;
  return Math.log1p(x) / a;
}

/** Research-labour growth over time: a constant, one value per year from the start, or a function of t. */
export type ResearchGrowthScenario = number | readonly number[] | Float64Array | ((t: number) => number);

/** Input of integrateGrowthPath. */
export interface IntegrateGrowthPathInput {
  gamma: number;
  theta: number;
  /**
   * Growth of research labour: a number; or per year, n[k] holding for t in [k, k + 1) (the array
   * must cover the horizon: at least ceil(years) entries); or a function n(t) (t in years).
   */
  n: ResearchGrowthScenario;
  g0: number;
  years: number;
  /** Output interval in years. Default 1. */
  step?: number;
  /** Relative tolerance of the adaptive integrator (per step). Default 1e-11. */
  relativeTolerance?: number;
  /** Absolute tolerance of the adaptive integrator (per step). Default 1e-15. */
  absoluteTolerance?: number;
  /** g above this counts as blown up and the path stops (values null). Default 1e6. */
  growthCeiling?: number;
}

/**
 * Integrated path plus how much work it took. Its blowUpTime is the time the path passed
 * growthCeiling (or the step size collapsed): just before the true blow-up.
 */
export interface IntegratedGrowthPath extends GrowthPath {
  /** Accepted and rejected Dormand-Prince steps. */
  steps: { accepted: number; rejected: number };
}

// Dormand-Prince 5(4) tableau (Dormand & Prince 1980, J. Comput. Appl. Math. 6(1)).
const DP_C = [0, 1 / 5, 3 / 10, 4 / 5, 8 / 9, 1, 1] as const;
const DP_A: readonly (readonly number[])[] = [
  [],
  [1 / 5],
  [3 / 40, 9 / 40],
  [44 / 45, -56 / 15, 32 / 9],
  [19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729],
  [9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656],
  [35 / 384, 0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84],
];
// Fifth-order weights (first-same-as-last: row 7 of DP_A) minus fourth-order weights.
const DP_E = [71 / 57600, 0, -71 / 16695, 71 / 1920, -17253 / 339200, 22 / 525, -1 / 40] as const;

/**
 * n(t) for the integrator. `segmentStart` is the start of the stretch being integrated; stretches
 * never cross a whole year when n is per year, so a per-year n is read at the stretch's year.
 */
function researchGrowthFunction(
  where: string,
  n: ResearchGrowthScenario,
  years: number,
): { at: (t: number, segmentStart: number) => number; breakpoints: number[] } {
  if (typeof n === "number") {
    requireFinite(where, "n", n);
    return { at: () => n, breakpoints: [] };
  }
  if (typeof n === "function") {
    return {
      at: (t) => {
        const value = n(t);
        if (typeof value !== "number" || !Number.isFinite(value)) throw new RangeError(`${where}: n(${t}) returned ${String(value)}, not a finite number`);
        return value;
      },
      breakpoints: [],
    };
  }
  const needed = Math.ceil(years - 1e-9);
  if (n.length < needed) throw new RangeError(`${where}: n has ${n.length} entries but the path spans ${years} years (needs ${needed}, one per year)`);
  for (let k = 0; k < needed; k++) requireFinite(where, `n[${k}]`, n[k]);
  const breakpoints: number[] = [];
  for (let k = 1; k < needed; k++) breakpoints.push(k);
  return { at: (_t, segmentStart) => n[Math.min(needed - 1, Math.floor(segmentStart + 1e-9))], breakpoints };
}

/**
 * Numerical path of knowledge growth, dg/dt = gamma n(t) g + (theta - 1) g^2, by the adaptive
 * Dormand-Prince 5(4) method (local error per step below absoluteTolerance + relativeTolerance |g|;
 * step size control with safety factor 0.9, growth at most 5x, shrink at most 5x per step).
 * Works where no closed form exists: n may vary over time (per-year array, held constant within
 * each year, integrated year by year without stepping over the jumps; or any function of t).
 * The path stops with a warning (later values null) when g passes growthCeiling or the step size
 * collapses near a blow-up.
 * Throws RangeError for non-finite parameters, g0 <= 0, a bad grid, an n array shorter than the
 * horizon, non-positive tolerances, or an n function returning a non-finite value.
 * Example: integrateGrowthPath({ gamma: 0.5, theta: 0.5, n: 0.01, g0: 0.03, years: 100, step: 100 }).growth[1]
 *   -> 0.01678848878597838 (closed form 0.01678848878594485)
 * Reference: Dormand & Prince (1980), "A family of embedded Runge-Kutta formulae", J. Comput. Appl. Math. 6(1).
 */
export function integrateGrowthPath(input: IntegrateGrowthPathInput): IntegratedGrowthPath {
  const where = "integrateGrowthPath";
  const { gamma, theta, g0 } = input;
  requireFinite(where, "gamma", gamma);
  requireFinite(where, "theta", theta);
  requirePositive(where, "g0", g0, G0_WHY);
  const times = timeGrid(where, input.years, input.step ?? 1);
  const rtol = input.relativeTolerance ?? 1e-11;
  const atol = input.absoluteTolerance ?? 1e-15;
  const ceiling = input.growthCeiling ?? 1e6;
  requirePositive(where, "relativeTolerance", rtol);
  requirePositive(where, "absoluteTolerance", atol);
  requirePositive(where, "growthCeiling", ceiling);
  const scenario = researchGrowthFunction(where, input.n, input.years);
  const b = 1 - theta;
  const rhs = (t: number, segmentStart: number, g: number): number => gamma * scenario.at(t, segmentStart) * g - b * g * g;

  // Stops: every output time plus every jump of a per-year n; stops closer than 1e-9 are merged,
  // keeping the output time (so k*step rounding never creates a sliver of a stretch).
  const outputTimes = new Set(times);
  const stops: number[] = [];
  for (const stop of [...times.slice(1), ...scenario.breakpoints].sort((x, y) => x - y)) {
    const previous = stops.length > 0 ? stops[stops.length - 1] : 0;
    if (stop - previous > 1e-9) stops.push(stop);
    else if (stops.length > 0 && outputTimes.has(stop)) stops[stops.length - 1] = stop;
  }
  const values = new Map<number, number>([[0, g0]]);
  const warnings: string[] = [];
  const k = new Array<number>(7).fill(0);
  let accepted = 0;
  let rejected = 0;
  let t = 0;
  let g = g0;
  let h = Math.min(stops[0], 0.1 / Math.max(Math.abs(rhs(0, 0, g0) / g0), 1e-3));
  let blowUp: number | null = null;

  integrate: for (const stop of stops) {
    const segmentStart = t;
    while (t < stop) {
      const remaining = stop - t;
      const last = h >= remaining;
      const hStep = last ? remaining : h;
      k[0] = rhs(t, segmentStart, g);
      for (let stage = 1; stage < 7; stage++) {
        let y = g;
        const row = DP_A[stage];
        for (let j = 0; j < stage; j++) y += hStep * row[j] * k[j];
        k[stage] = rhs(t + DP_C[stage] * hStep, segmentStart, y);
      }
      // Fifth-order solution: the last stage was evaluated at it (first same as last).
      let next = g;
      const weights = DP_A[6];
      for (let j = 0; j < 6; j++) next += hStep * weights[j] * k[j];
      let errorEstimate = 0;
      for (let j = 0; j < 7; j++) errorEstimate += DP_E[j] * k[j];
      const ratio = Math.abs(hStep * errorEstimate) / (atol + rtol * Math.max(Math.abs(g), Math.abs(next)));
      if (Number.isFinite(next) && Number.isFinite(ratio) && ratio <= 1) {
        accepted++;
        t = last ? stop : t + hStep;
        g = next;
        if (!(g < ceiling)) {
          blowUp = t;
          warnings.push(`growth passed ${ceiling} at t = ${t.toPrecision(6)} years (blow-up); later values are null`);
          break integrate;
        }
        if (!(g > 0)) {
          warnings.push(`growth reached ${g} at t = ${t.toPrecision(6)} years, outside the model's positive range; later values are null`);
          break integrate;
        }
        const grow = ratio === 0 ? 5 : Math.min(5, Math.max(0.2, 0.9 * ratio ** -0.2));
        // A step cut short to land on a stop says nothing against the longer free step.
        h = last ? Math.max(h, hStep * grow) : hStep * grow;
      } else {
        rejected++;
        h = hStep * (Number.isFinite(ratio) ? Math.max(0.2, 0.9 * ratio ** -0.2) : 0.2);
        if (h < 1e-12 * Math.max(1, t)) {
          blowUp = t;
          warnings.push(`step size collapsed at t = ${t.toPrecision(6)} years with g = ${g.toPrecision(6)} (blow-up); later values are null`);
          break integrate;
        }
      }
    }
    values.set(stop, g);
  }
  const growth = times.map((time) => values.get(time) ?? null);
  return { times, growth, regime: classifyRegime(theta), blowUpTime: blowUp, steps: { accepted, rejected }, warnings };
}

// ---------------------------------------------------------------------------------------------
// Discrete time
// ---------------------------------------------------------------------------------------------

/**
 * Steady state of the discrete law of motion A_t - A_{t-1} = B R_{t-1}^gamma A_{t-1}^theta with
 * R growing by the factor (1 + n) each period: g* = (1 + n)^(gamma / (1 - theta)) - 1.
 * Exact, from g_{t+1}/g_t = (1 + n)^gamma (1 + g_t)^(theta - 1) = 1; in log rates it equals the
 * continuous-time result: ln(1 + g*) = gamma ln(1 + n) / (1 - theta).
 * Throws RangeError for theta >= 1 (no steady state), n <= -1 or non-finite inputs.
 * Example: discreteSteadyState({ gamma: 0.5, theta: 0.5, n: 0.01 }) -> 0.01
 * Reference: DOMAIN.md section 2 [computed].
 */
export function discreteSteadyState({ gamma, theta, n }: GrowthParameters): number {
  const where = "discreteSteadyState";
  requireFinite(where, "gamma", gamma);
  requireFinite(where, "theta", theta);
  requireFinite(where, "n", n);
  if (n <= -1) throw new RangeError(`${where}: n = ${n} must exceed -1 (a per-period growth rate)`);
  if (theta >= 1) throw new RangeError(`${where}: theta = ${theta} >= 1, so there is no steady state`);
  return Math.expm1((gamma / (1 - theta)) * Math.log1p(n));
}

/** Input of discreteGrowthPath. */
export interface DiscreteGrowthPathInput {
  gamma: number;
  theta: number;
  /**
   * Per-period growth of research labour, R_t / R_{t-1} - 1: a number, or one value per period
   * where n[t] (the growth of R into period t) drives g_{t+1}; at least `periods` entries.
   */
  n: number | readonly number[] | Float64Array;
  /** g_0 = A_0 / A_{-1} - 1 (positive). */
  g0: number;
  /** Number of periods to iterate (positive integer). */
  periods: number;
}

/**
 * Discrete-time path of knowledge growth from the law of motion A_t - A_{t-1} = B R_{t-1}^gamma A_{t-1}^theta.
 * With g_t = A_t/A_{t-1} - 1 = B R_{t-1}^gamma A_{t-1}^(theta-1), dividing consecutive periods gives
 * the exact recursion g_{t+1} = g_t (1 + n_t)^gamma (1 + g_t)^(theta - 1), n_t = R_t/R_{t-1} - 1
 * (the recursion in DOMAIN.md section 2 is exact, not an approximation, when n is this per-period
 * rate; for a log rate pass exp(n) - 1). Returns g_0 ... g_periods; null after overflow, with a warning.
 * Throws RangeError for non-finite parameters, g0 <= 0, a non-integer or non-positive periods, an
 * n array shorter than periods, or any n <= -1.
 * Example: discreteGrowthPath({ gamma: 1, theta: 0, n: 0.02, g0: 0.01, periods: 1 }).growth
 *   -> [0.01, 0.0100990099009901]
 * Reference: DOMAIN.md section 2 [computed], derived from the discrete law of motion.
 */
export function discreteGrowthPath(input: DiscreteGrowthPathInput): { periods: number[]; growth: (number | null)[]; regime: Regime; warnings: string[] } {
  const where = "discreteGrowthPath";
  const { gamma, theta, g0, periods } = input;
  requireFinite(where, "gamma", gamma);
  requireFinite(where, "theta", theta);
  requirePositive(where, "g0", g0, G0_WHY);
  if (!Number.isInteger(periods) || periods < 1) throw new RangeError(`${where}: periods must be a positive integer, got ${periods}`);
  if (periods + 1 > MAX_GRID_POINTS) throw new RangeError(`${where}: ${periods + 1} points exceed the limit of ${MAX_GRID_POINTS}`);
  const n = input.n;
  if (typeof n !== "number" && n.length < periods) throw new RangeError(`${where}: n has ${n.length} entries but periods is ${periods}`);
  const nAt = (t: number): number => {
    const value = typeof n === "number" ? n : n[t];
    requireFinite(where, typeof n === "number" ? "n" : `n[${t}]`, value);
    if (value <= -1) throw new RangeError(`${where}: ${typeof n === "number" ? "n" : `n[${t}]`} = ${value} must exceed -1`);
    return value;
  };
  const growth: (number | null)[] = [g0];
  const warnings: string[] = [];
  let g = g0;
  for (let t = 0; t < periods; t++) {
    const nt = nAt(t);
    const next = g * Math.exp(gamma * Math.log1p(nt) + (theta - 1) * Math.log1p(g));
    if (!Number.isFinite(next) || next <= 0) {
      warnings.push(`growth left the range of doubles in period ${t + 1}; later values are null`);
      for (let s = t; s < periods; s++) {
        if (typeof n !== "number") nAt(s);
        growth.push(null);
      }
      break;
    }
    g = next;
    growth.push(g);
  }
  return { periods: growth.map((_, t) => t), growth, regime: classifyRegime(theta), warnings };
}

// ---------------------------------------------------------------------------------------------
// Levels and fan charts
// ---------------------------------------------------------------------------------------------

/** Input of projectTfpLevel. */
export interface ProjectTfpLevelInput {
  /** TFP level at the first point of the path (positive). */
  A0: number;
  /** Growth path: g at each grid point (null where unknown). */
  growth: readonly (number | null)[] | Float64Array;
  /**
   * "continuous": growth[k] is the instantaneous rate at time k*step, and ln A is integrated by the
   * trapezoid rule (error of order step^2 g''/12 per year); "discrete": growth[k] is the growth from
   * point k-1 to point k, A_k = A_{k-1} (1 + growth[k]) (exact; growth[0] is not used). Default "continuous".
   */
  compounding?: "continuous" | "discrete";
  /** Years between grid points for "continuous". Default 1. */
  step?: number;
}

/**
 * Level of TFP along a growth path, starting from A0.
 * Continuous: ln A_k = ln A_{k-1} + step (g_{k-1} + g_k)/2; discrete: A_k = A_{k-1} (1 + g_k).
 * Levels are null from the first null or non-finite growth value on, with a warning.
 * Throws RangeError for A0 <= 0, an empty path, step <= 0 or a discrete growth <= -1.
 * Example: projectTfpLevel({ A0: 1, growth: [0.02, 0.02], compounding: "discrete" }).level -> [1, 1.02]
 * Reference: common practice (chain-linking growth rates into an index).
 */
export function projectTfpLevel(input: ProjectTfpLevelInput): { level: (number | null)[]; warnings: string[] } {
  const where = "projectTfpLevel";
  requirePositive(where, "A0", input.A0);
  const compounding = input.compounding ?? "continuous";
  const step = input.step ?? 1;
  requirePositive(where, "step", step);
  const growth = input.growth;
  if (growth.length === 0) throw new RangeError(`${where}: growth is empty`);
  const level: (number | null)[] = [input.A0];
  const warnings: string[] = [];
  let logLevel = Math.log(input.A0);
  let broken = false;
  for (let k = 1; k < growth.length; k++) {
    const current = growth[k];
    const previous = growth[k - 1];
    if (!broken) {
      if (compounding === "discrete") {
        if (current === null || !Number.isFinite(current)) broken = true;
        else if (current <= -1) throw new RangeError(`${where}: growth[${k}] = ${current} is <= -1 (TFP cannot fall to zero or below)`);
        else logLevel += Math.log1p(current);
      } else if (current === null || previous === null || !Number.isFinite(current) || !Number.isFinite(previous)) {
        broken = true;
      } else {
        logLevel += (step * (previous + current)) / 2;
      }
      if (broken) warnings.push(`growth is missing or infinite at point ${k}; levels from there on are null`);
    }
    const value = broken ? null : Math.exp(logLevel);
    level.push(value !== null && Number.isFinite(value) ? value : null);
  }
  return { level, warnings };
}

/** Quantile bands over many simulated paths. */
export interface FanChart {
  quantiles: number[];
  /** bands[q][t]: the quantiles[q] quantile at point t over the draws; null where no draw has a value. */
  bands: (number | null)[][];
  /** Number of draws with a value at each point. */
  used: number[];
  warnings: string[];
}

/**
 * Fan chart: per point in time, quantiles of many simulated paths (e.g. growth paths under
 * bootstrap draws of gamma and theta). Quantiles by linear interpolation between order statistics
 * (Hyndman & Fan type 7, the default of R's quantile and NumPy's percentile).
 * Missing values (null, NaN) are dropped by default and counted in `used`; with
 * { missing: "infinite" } they count as +Infinity instead, the right choice for paths that are
 * null because they blew up (dropping them would bias the bands downwards).
 * Throws RangeError for no draws, draws of different lengths, or quantiles outside [0, 1].
 * Example: fanChart([[1, 2], [3, 4], [5, 6]], [0.5]).bands -> [[3, 4]]
 * Reference: Hyndman & Fan (1996), "Sample Quantiles in Statistical Packages", The American Statistician 50(4).
 */
export function fanChart(
  drawsOfPaths: readonly (readonly (number | null)[] | Float64Array)[],
  quantiles: readonly number[],
  options?: { missing?: "drop" | "infinite" },
): FanChart {
  const where = "fanChart";
  if (drawsOfPaths.length === 0) throw new RangeError(`${where}: drawsOfPaths is empty`);
  if (quantiles.length === 0) throw new RangeError(`${where}: quantiles is empty`);
  quantiles.forEach((q, i) => {
    if (!(q >= 0 && q <= 1)) throw new RangeError(`${where}: quantiles[${i}] = ${q} is outside [0, 1]`);
  });
  const length = drawsOfPaths[0].length;
  drawsOfPaths.forEach((draw, i) => {
    if (draw.length !== length) throw new RangeError(`${where}: draw ${i} has ${draw.length} values but draw 0 has ${length}`);
  });
  const missingAsInfinite = (options?.missing ?? "drop") === "infinite";
  const bands = quantiles.map(() => new Array<number | null>(length).fill(null));
  const used = new Array<number>(length).fill(0);
  const column = new Float64Array(drawsOfPaths.length);
  let dropped = 0;
  for (let t = 0; t < length; t++) {
    let m = 0;
    for (const draw of drawsOfPaths) {
      const value = draw[t];
      if (value === null || Number.isNaN(value)) {
        if (missingAsInfinite) column[m++] = Infinity;
        else dropped++;
      } else {
        column[m++] = value;
      }
    }
    used[t] = m;
    if (m === 0) continue;
    const sorted = column.subarray(0, m).sort();
    quantiles.forEach((q, i) => {
      const position = q * (m - 1);
      const lo = Math.floor(position);
      const hi = Math.min(lo + 1, m - 1);
      const fraction = position - lo;
      const low = sorted[lo];
      const high = sorted[hi];
      bands[i][t] = fraction === 0 || low === high ? low : low + fraction * (high - low);
    });
  }
  const warnings: string[] = [];
  if (dropped > 0) warnings.push(`${dropped} missing values were left out; bands where draws are missing rest on fewer draws (see used)`);
  return { quantiles: [...quantiles], bands, used, warnings };
}
