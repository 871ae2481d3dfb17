/**
 * Model specifications of the knowledge production function dA/dt = B R^gamma A^theta: what to
 * estimate and how, as a plain frozen value. A spec names the estimating form, the scope (one
 * economy or a panel), the smoothing of TFP growth, the lag of the inputs, restrictions, the
 * covariance estimator, interval level, how research-labour growth n is measured, the minimum
 * sample, the bootstrap, the knife-edge tolerance and the plausible ranges used for flags.
 *
 * `kpfSpec(input)` fills defaults and validates (throws RangeError naming the field); the three
 * named specs `reference`, `reference-panel` and `team-default` are exported as data. Validation of
 * untrusted JSON lives in lib/schemas/kpf-spec.ts (zod); this file stays framework-free.
 *
 * Symbols: A TFP (knowledge), R research labour, K capital, g growth of A, n growth of R, L the
 * input lag in years, kappa = gamma/(1 - theta) (long-run elasticity of A to R).
 */

/** Estimating form. */
export type KpfForm =
  /** ln g_t = ln B + gamma ln R_{t-L} + (theta - 1) ln A_{t-L} + e_t, by OLS. */
  | "log-linear"
  /** A_t - A_{t-1} = B R_{t-L}^gamma A_{t-L}^theta + e_t, by nonlinear least squares started from the log-linear fit. */
  | "levels-nls"
  /** ln A_t = c + kappa ln R_{t-L} (+ leads and lags of the change of ln R: dynamic OLS) + e_t; g* = kappa n. */
  | "cointegration"
  /** ln g_t = ln B + gamma ln R_{t-L} + beta ln K_{t-L} + (theta - 1) ln A_{t-L} + e_t; g* = (beta + gamma) n/(1 - theta - beta). */
  | "capital-augmented";

/** One economy at a time, or a pooled panel with economy fixed effects (economy-specific B, common gamma, theta). */
export type KpfScope = "economy" | "panel";

/**
 * How annual TFP growth is smoothed before the log is taken (growth forms only).
 * - annual: g_t = ln A_t - ln A_{t-1}.
 * - average, overlapping = false: k-year growth (ln A_{s+k} - ln A_s)/k over non-overlapping spans
 *   that end at the last year with TFP and step back by k years (the end of one span is the start
 *   of the previous); one observation per span.
 * - average, overlapping = true: the same k-year growth ending in every year (moving average of
 *   annual growth); consecutive observations share k-1 years, so their errors are MA(k-1): the
 *   automatic HAC lag is raised to at least k-1.
 * - trend, method rolling-log-linear: g_t = least-squares slope of ln A on the year over the w years
 *   t-w+1..t (all present).
 * - trend, method hp: g_t = tau_t - tau_{t-1}, tau the Hodrick-Prescott trend of ln A with
 *   smoothing lambda, over each run of consecutive years with TFP (at least 4 years); note the
 *   filter's known end-point bias.
 * In every case the observation's "from" year s is the year growth is measured from (t-1, the span
 * start, or the window start) and the inputs are taken at s + 1 - L.
 */
export type KpfSmoothing =
  | { readonly kind: "annual" }
  | { readonly kind: "average"; readonly years: number; readonly overlapping: boolean }
  | { readonly kind: "trend"; readonly method: "rolling-log-linear"; readonly years: number }
  | { readonly kind: "trend"; readonly method: "hp"; readonly lambda: number };

/** Covariance estimator of the coefficients (see lib/estimation/covariance.ts for each reference). */
export type KpfCovarianceChoice =
  | { readonly kind: "classical" }
  | { readonly kind: "HC"; readonly type: "HC0" | "HC1" | "HC3" }
  /** Cluster-robust CR1 by economy, as R sandwich::vcovCL(m, cluster = ~economy, type = "HC1"); panel scope only. */
  | { readonly kind: "cluster" }
  /**
   * Newey-West HAC, Bartlett kernel, no prewhitening; lags "auto" = floor(4 (T/100)^(2/9)) (raised
   * to k-1 for overlapping k-year averages), adjust = multiply by T/(T - k). In a panel the
   * autocovariances are taken within each economy and summed.
   */
  | { readonly kind: "HAC"; readonly lags: "auto" | number; readonly adjust: boolean };

/** Where n, the growth of research labour, comes from. */
export type KpfResearchGrowthChoice =
  | {
      readonly kind: "window";
      /** Series whose growth is used: researchers (default) or population (constant research share). */
      readonly source: "researchers" | "population";
      /** Trailing window in years (see researchGrowth). */
      readonly window: number;
      readonly method: "endpoints" | "log-trend";
    }
  | { readonly kind: "given"; readonly value: number };

/** How the bootstrap resamples a panel (economy scope always uses moving blocks of years). */
export type KpfPanelBootstrapScheme =
  /** Whole economies drawn with replacement (the bootstrap analogue of clustering by economy). */
  | "economies"
  /** Moving blocks of years within each economy, economies independent. */
  | "within-economy"
  /** The same moving blocks of years for every economy (keeps common shocks of a year together). */
  | "common-years";

/** A fully specified, frozen model specification. */
export interface KpfSpec {
  /** Short name ("reference", "custom", ...). */
  readonly name: string;
  /** One sentence saying what the spec is for. */
  readonly description: string;
  readonly form: KpfForm;
  readonly scope: KpfScope;
  readonly smoothing: KpfSmoothing;
  /** Growth forms take logs of growth: non-positive growth observations are dropped and counted. */
  readonly nonPositiveGrowth: "drop";
  /** Input lag L in years (inputs at t - L for annual growth). 0..10; growth forms and levels-nls need L >= 1. */
  readonly lagYears: number;
  /** Dynamic OLS leads and lags p of the change of ln R (cointegration only; 0 = static OLS). */
  readonly leadsLags: number;
  /** Restrictions: a fixed value, or null (estimated). gamma = 1 moves ln R to the left side. */
  readonly restrictions: { readonly gamma: number | null; readonly theta: number | null };
  readonly covariance: KpfCovarianceChoice;
  /** Confidence level of every interval, in (0, 1). */
  readonly level: number;
  readonly researchGrowth: KpfResearchGrowthChoice;
  /**
   * Whether the sampling error of n enters the g* intervals: "window" uses the standard deviation of
   * the annual log changes in the n window divided by the square root of their number (the standard
   * error of their mean); "none" treats n as known.
   */
  readonly nUncertainty: "window" | "none";
  /** Fewer usable observations than this (per economy): no estimate, and a warning. */
  readonly minObservations: number;
  readonly bootstrap: {
    /** Number of draws (0 = no bootstrap: delta-method intervals only). */
    readonly draws: number;
    /** Block length in observations, or "auto" = round(T^(1/3)) (Politis & White 2004 rate). */
    readonly blockLength: "auto" | number;
    /** Seed of the generator; each economy gets its own stream derived from the seed and its code. */
    readonly seed: number;
    readonly panelScheme: KpfPanelBootstrapScheme;
  };
  /** |theta - 1| <= tolerance counts as knife-edge. */
  readonly knifeEdgeTolerance: number;
  /** Estimates outside these closed ranges are flagged in words. */
  readonly plausible: {
    readonly gamma: readonly [number, number];
    readonly theta: readonly [number, number];
  };
}

/** Deep-partial input of kpfSpec: anything left out takes the default (the `reference` values). */
export interface KpfSpecInput {
  readonly name?: string;
  readonly description?: string;
  readonly form?: KpfForm;
  readonly scope?: KpfScope;
  readonly smoothing?:
    | { readonly kind: "annual" }
    | { readonly kind: "average"; readonly years: number; readonly overlapping?: boolean }
    | { readonly kind: "trend"; readonly method?: "rolling-log-linear"; readonly years?: number }
    | { readonly kind: "trend"; readonly method: "hp"; readonly lambda?: number };
  readonly nonPositiveGrowth?: "drop";
  readonly lagYears?: number;
  readonly leadsLags?: number;
  readonly restrictions?: { readonly gamma?: number | null; readonly theta?: number | null };
  readonly covariance?:
    | { readonly kind: "classical" }
    | { readonly kind: "HC"; readonly type?: "HC0" | "HC1" | "HC3" }
    | { readonly kind: "cluster" }
    | { readonly kind: "HAC"; readonly lags?: "auto" | number; readonly adjust?: boolean };
  readonly level?: number;
  readonly researchGrowth?:
    | { readonly kind: "window"; readonly source?: "researchers" | "population"; readonly window?: number; readonly method?: "endpoints" | "log-trend" }
    | { readonly kind: "given"; readonly value: number };
  readonly nUncertainty?: "window" | "none";
  readonly minObservations?: number;
  readonly bootstrap?: {
    readonly draws?: number;
    readonly blockLength?: "auto" | number;
    readonly seed?: number;
    readonly panelScheme?: KpfPanelBootstrapScheme;
  };
  readonly knifeEdgeTolerance?: number;
  readonly plausible?: { readonly gamma?: readonly [number, number]; readonly theta?: readonly [number, number] };
}

const FORMS: readonly KpfForm[] = ["log-linear", "levels-nls", "cointegration", "capital-augmented"];
const SCHEMES: readonly KpfPanelBootstrapScheme[] = ["economies", "within-economy", "common-years"];

/**
 * Default HP smoothing for annual data: 100 (the convention of D. K. Backus and P. J. Kehoe (1992),
 * AER 82(4), from memory); M. O. Ravn and H. Uhlig (2002), REStat 84(2), argue for 6.25.
 */
export const DEFAULT_HP_LAMBDA = 100;

function fail(field: string, message: string): never {
  throw new RangeError(`kpfSpec: ${field} ${message}`);
}

function integerIn(field: string, value: unknown, lo: number, hi: number): number {
  if (typeof value !== "number" || !Number.isInteger(value) || value < lo || value > hi) {
    fail(field, `must be an integer in [${lo}, ${hi}], got ${JSON.stringify(value)}`);
  }
  return value;
}

function finite(field: string, value: unknown): number {
  if (typeof value !== "number" || !Number.isFinite(value)) fail(field, `must be a finite number, got ${JSON.stringify(value)}`);
  return value;
}

function oneOf<T extends string>(field: string, value: unknown, allowed: readonly T[]): T {
  if (!allowed.includes(value as T)) fail(field, `must be one of ${allowed.map((a) => `"${a}"`).join(", ")}, got ${JSON.stringify(value)}`);
  return value as T;
}

function range(field: string, value: unknown): readonly [number, number] {
  if (!Array.isArray(value) || value.length !== 2) fail(field, `must be a pair [low, high], got ${JSON.stringify(value)}`);
  const lo = Number(value[0]);
  const hi = Number(value[1]);
  if (Number.isNaN(lo) || Number.isNaN(hi) || typeof value[0] !== "number" || typeof value[1] !== "number" || !(lo <= hi)) {
    fail(field, `must be numbers with low <= high, got ${JSON.stringify(value)}`);
  }
  return Object.freeze([lo, hi] as const);
}

function resolveSmoothing(input: KpfSpecInput["smoothing"]): KpfSmoothing {
  const s = input ?? { kind: "annual" as const };
  switch (s.kind) {
    case "annual":
      return Object.freeze({ kind: "annual" as const });
    case "average":
      return Object.freeze({
        kind: "average" as const,
        years: integerIn("smoothing.years", s.years, 2, 20),
        overlapping: s.overlapping ?? false,
      });
    case "trend": {
      const method = s.method ?? "rolling-log-linear";
      if (method === "hp") {
        const lambda = finite("smoothing.lambda", (s as { lambda?: number }).lambda ?? DEFAULT_HP_LAMBDA);
        if (!(lambda > 0)) fail("smoothing.lambda", `must be positive, got ${lambda}`);
        return Object.freeze({ kind: "trend" as const, method: "hp" as const, lambda });
      }
      if (method !== "rolling-log-linear") fail("smoothing.method", `must be "rolling-log-linear" or "hp", got ${JSON.stringify(method)}`);
      return Object.freeze({
        kind: "trend" as const,
        method: "rolling-log-linear" as const,
        years: integerIn("smoothing.years", (s as { years?: number }).years ?? 5, 3, 30),
      });
    }
    default:
      return fail("smoothing.kind", `must be "annual", "average" or "trend", got ${JSON.stringify((s as { kind: unknown }).kind)}`);
  }
}

function resolveCovariance(input: KpfSpecInput["covariance"]): KpfCovarianceChoice {
  const c = input ?? { kind: "HAC" as const };
  switch (c.kind) {
    case "classical":
      return Object.freeze({ kind: "classical" as const });
    case "HC":
      return Object.freeze({ kind: "HC" as const, type: oneOf("covariance.type", c.type ?? "HC1", ["HC0", "HC1", "HC3"] as const) });
    case "cluster":
      return Object.freeze({ kind: "cluster" as const });
    case "HAC": {
      const lags = c.lags ?? "auto";
      if (lags !== "auto") integerIn("covariance.lags", lags, 0, 50);
      const adjust = c.adjust ?? true;
      if (typeof adjust !== "boolean") fail("covariance.adjust", `must be true or false, got ${JSON.stringify(adjust)}`);
      return Object.freeze({ kind: "HAC" as const, lags, adjust });
    }
    default:
      return fail("covariance.kind", `must be "classical", "HC", "cluster" or "HAC", got ${JSON.stringify((c as { kind: unknown }).kind)}`);
  }
}

function resolveResearchGrowth(input: KpfSpecInput["researchGrowth"]): KpfResearchGrowthChoice {
  const r = input ?? { kind: "window" as const };
  if (r.kind === "given") return Object.freeze({ kind: "given" as const, value: finite("researchGrowth.value", r.value) });
  if (r.kind !== "window") fail("researchGrowth.kind", `must be "window" or "given", got ${JSON.stringify((r as { kind: unknown }).kind)}`);
  return Object.freeze({
    kind: "window" as const,
    source: oneOf("researchGrowth.source", r.source ?? "researchers", ["researchers", "population"] as const),
    window: integerIn("researchGrowth.window", r.window ?? 10, 1, 100),
    method: oneOf("researchGrowth.method", r.method ?? "endpoints", ["endpoints", "log-trend"] as const),
  });
}

/**
 * Model specification: fills every field left out with its default and validates the whole.
 * Defaults are the `reference` spec's: log-linear, economy scope, annual growth, non-positive years
 * dropped, inputs lagged 1 year, no restrictions, HAC (Bartlett, lag floor(4 (T/100)^(2/9)), no
 * prewhitening, adjust T/(T-k): as R sandwich::NeweyWest(m, lag, prewhite = FALSE, adjust = TRUE)),
 * 90% intervals, n = endpoint growth of researchers over a 10-year window, n's sampling error
 * included, at least 8 observations, 999 moving-block draws (block round(T^(1/3))), seed 20240611,
 * knife-edge tolerance 0.01, plausible gamma in [0, 3] and theta in [-5, 1.5].
 * Throws RangeError naming the field for anything out of range, and for combinations that make no
 * sense: cluster covariance in economy scope; smoothing other than annual for levels-nls and
 * cointegration; lag 0 for growth forms and levels-nls; leads/lags outside the cointegration form;
 * theta restricted in the cointegration form without gamma restricted... (see the messages).
 * Example: kpfSpec({ scope: "panel", restrictions: { gamma: 1 }, covariance: { kind: "cluster" } }).restrictions
 *   -> { gamma: 1, theta: null }
 * Reference: Jones (1995), JPE 103(4) (the model); Bloom, Jones, Van Reenen & Webb (2020), AER
 * 110(4) (gamma = 1); Newey & West (1987, 1994) (HAC); Politis & White (2004) (block length).
 */
export function kpfSpec(input: KpfSpecInput = {}): KpfSpec {
  if (input === null || typeof input !== "object") throw new RangeError(`kpfSpec: the input must be an object, got ${JSON.stringify(input)}`);
  const form = oneOf("form", input.form ?? "log-linear", FORMS);
  const scope = oneOf("scope", input.scope ?? "economy", ["economy", "panel"] as const);
  const smoothing = resolveSmoothing(input.smoothing);
  const nonPositiveGrowth = oneOf("nonPositiveGrowth", input.nonPositiveGrowth ?? "drop", ["drop"] as const);
  const lagYears = integerIn("lagYears", input.lagYears ?? (form === "cointegration" ? 0 : 1), 0, 10);
  const leadsLags = integerIn("leadsLags", input.leadsLags ?? 0, 0, 5);
  const gammaFixed = input.restrictions?.gamma ?? null;
  const thetaFixed = input.restrictions?.theta ?? null;
  if (gammaFixed !== null) finite("restrictions.gamma", gammaFixed);
  if (thetaFixed !== null) finite("restrictions.theta", thetaFixed);
  const covariance = resolveCovariance(input.covariance);
  const level = finite("level", input.level ?? 0.9);
  if (!(level > 0 && level < 1)) fail("level", `must be in (0, 1), got ${level}`);
  const researchGrowth = resolveResearchGrowth(input.researchGrowth);
  const nUncertainty = oneOf("nUncertainty", input.nUncertainty ?? (researchGrowth.kind === "given" ? "none" : "window"), ["window", "none"] as const);
  const minObservations = integerIn("minObservations", input.minObservations ?? 8, 3, 1000);
  const draws = integerIn("bootstrap.draws", input.bootstrap?.draws ?? 999, 0, 1_000_000);
  const blockLength = input.bootstrap?.blockLength ?? "auto";
  if (blockLength !== "auto") integerIn("bootstrap.blockLength", blockLength, 1, 100);
  const seed = input.bootstrap?.seed ?? 20240611;
  if (typeof seed !== "number" || !Number.isSafeInteger(seed)) fail("bootstrap.seed", `must be a safe integer, got ${JSON.stringify(seed)}`);
  const panelScheme = oneOf("bootstrap.panelScheme", input.bootstrap?.panelScheme ?? "economies", SCHEMES);
  const knifeEdgeTolerance = finite("knifeEdgeTolerance", input.knifeEdgeTolerance ?? 0.01);
  if (knifeEdgeTolerance < 0 || knifeEdgeTolerance > 0.5) fail("knifeEdgeTolerance", `must be in [0, 0.5], got ${knifeEdgeTolerance}`);
  const plausible = Object.freeze({
    gamma: range("plausible.gamma", input.plausible?.gamma ?? [0, 3]),
    theta: range("plausible.theta", input.plausible?.theta ?? [-5, 1.5]),
  });

  // Combinations.
  if (covariance.kind === "cluster" && scope !== "panel") {
    fail("covariance", 'is "cluster" (by economy), which needs scope "panel"');
  }
  if ((form === "levels-nls" || form === "cointegration") && smoothing.kind !== "annual") {
    fail("smoothing", `must be "annual" for the ${form} form (it works on levels, not on smoothed growth), got "${smoothing.kind}"`);
  }
  if (form !== "cointegration" && lagYears < 1) {
    fail("lagYears", `must be at least 1 for the ${form} form (inputs must predate the growth they explain), got ${lagYears}`);
  }
  if (form !== "cointegration" && leadsLags !== 0) fail("leadsLags", `applies to the cointegration form only, got ${leadsLags} for ${form}`);
  if (form === "cointegration" && thetaFixed !== null && gammaFixed !== null) {
    fail("restrictions", "fix gamma or theta in the cointegration form, not both (kappa = gamma/(1 - theta) would be fixed)");
  }
  if (form === "cointegration" && thetaFixed !== null && thetaFixed === 1) fail("restrictions.theta", "cannot be 1 in the cointegration form (kappa is infinite)");
  if (form === "cointegration" && gammaFixed !== null && gammaFixed === 0) fail("restrictions.gamma", "cannot be 0 in the cointegration form (theta = 1 - gamma/kappa)");

  const name = input.name ?? "custom";
  if (typeof name !== "string" || name.length === 0) fail("name", `must be a non-empty string, got ${JSON.stringify(name)}`);
  return Object.freeze({
    name,
    description: input.description ?? "",
    form,
    scope,
    smoothing,
    nonPositiveGrowth,
    lagYears,
    leadsLags,
    restrictions: Object.freeze({ gamma: gammaFixed, theta: thetaFixed }),
    covariance,
    level,
    researchGrowth,
    nUncertainty,
    minObservations,
    bootstrap: Object.freeze({ draws, blockLength, seed, panelScheme }),
    knifeEdgeTolerance,
    plausible,
  });
}

/**
 * The `reference` spec of issue 3, fixed for outside comparison: log-linear on annual growth,
 * non-positive years dropped, inputs lagged one year; observation t used when A_t, A_{t-1} and
 * R_{t-1} are present and A_t > A_{t-1}; OLS estimates; HAC Bartlett with lag floor(4 (T/100)^(2/9)),
 * no prewhitening, small-sample factor T/(T-k) (R sandwich::NeweyWest(m, lag, prewhite = FALSE,
 * adjust = TRUE)); n = (ln R_t1 - ln R_t0)/(t1 - t0) over the 10-year window; fewer than 8 usable
 * observations: no estimate; 90% intervals; 999 moving-block bootstrap draws.
 */
export const REFERENCE_SPEC: KpfSpec = kpfSpec({
  name: "reference",
  description:
    "Single-economy log-linear fit on annual TFP growth with HAC standard errors, fixed for comparison with outside references; a diagnostic, not a headline.",
});

/**
 * The `reference-panel` spec of issue 3: the reference sample rule pooled over all economies with
 * economy fixed effects (dummy columns), gamma restricted to 1, standard errors clustered by
 * economy (R sandwich::vcovCL(m, cluster = ~economy, type = "HC1")); each economy keeps its own n
 * and g* = n/(1 - theta).
 */
export const REFERENCE_PANEL_SPEC: KpfSpec = kpfSpec({
  name: "reference-panel",
  description:
    "Pooled log-linear fit on annual TFP growth with economy fixed effects, gamma = 1 (Bloom et al. 2020) and standard errors clustered by economy, fixed for outside comparison.",
  scope: "panel",
  restrictions: { gamma: 1 },
  covariance: { kind: "cluster" },
});

/**
 * The `team-default` spec: the restricted panel (gamma = 1 as in Bloom, Jones, Van Reenen & Webb
 * 2020; common theta; economy fixed effects) on Hodrick-Prescott trend growth of TFP (lambda 100,
 * the usual annual smoothing), standard errors clustered by economy (robust to the serial
 * correlation that smoothing creates), whole economies resampled in the bootstrap.
 * Why: on real series a single economy has 7-20 usable years and annual TFP growth is often
 * negative, so single-economy annual fits scatter widely (theta of +30 or -100); pooling
 * identifies one theta from all economies, fixing gamma removes the near-collinearity of ln R and
 * ln A on trending data, and trend growth is rarely negative, so few years are dropped (annual
 * growth drops the bad years and so selects the sample on the outcome). On World Bank researchers
 * x population and PWT 10.01 TFP (kpf-real-data.test.ts) it gives theta near -2.9 with a 90%
 * interval inside the converging regime for about 40 economies, where 5-year moving averages give
 * theta near -7.4 (outside the plausible range) and non-overlapping 5-year averages leave too few
 * observations per economy.
 */
export const TEAM_DEFAULT_SPEC: KpfSpec = kpfSpec({
  name: "team-default",
  description:
    "Restricted panel: gamma = 1, common theta, economy fixed effects, HP-trend TFP growth (lambda 100), standard errors clustered by economy; the team's headline estimate.",
  scope: "panel",
  smoothing: { kind: "trend", method: "hp", lambda: 100 },
  restrictions: { gamma: 1 },
  covariance: { kind: "cluster" },
});

/** The named specs by name. */
export const NAMED_KPF_SPECS: Readonly<Record<"reference" | "reference-panel" | "team-default", KpfSpec>> = Object.freeze({
  reference: REFERENCE_SPEC,
  "reference-panel": REFERENCE_PANEL_SPEC,
  "team-default": TEAM_DEFAULT_SPEC,
});

/**
 * A named spec, or throws RangeError listing the names.
 * Example: namedKpfSpec("reference").form -> "log-linear"
 * Reference: issue 3 (definitions of `reference` and `reference-panel`).
 */
export function namedKpfSpec(name: string): KpfSpec {
  const spec = (NAMED_KPF_SPECS as Record<string, KpfSpec>)[name];
  if (!spec) throw new RangeError(`unknown spec "${name}": the named specs are ${Object.keys(NAMED_KPF_SPECS).join(", ")}`);
  return spec;
}

/**
 * Spec from a base spec and overrides (deep merge of the nested objects, arrays replaced).
 * Throws as kpfSpec.
 * Example: deriveKpfSpec(REFERENCE_SPEC, { bootstrap: { draws: 0 } }).bootstrap.draws -> 0
 * Reference: none (a convenience).
 */
export function deriveKpfSpec(base: KpfSpec, overrides: KpfSpecInput): KpfSpec {
  const merged: Record<string, unknown> = { ...base, name: overrides.name ?? `${base.name}+` };
  for (const [key, value] of Object.entries(overrides)) {
    if (value === undefined) continue;
    const current = (base as unknown as Record<string, unknown>)[key];
    const sameKind =
      current !== null &&
      typeof current === "object" &&
      !Array.isArray(current) &&
      value !== null &&
      typeof value === "object" &&
      !Array.isArray(value) &&
      (!("kind" in (value as object)) || (value as { kind: unknown }).kind === (current as { kind?: unknown }).kind);
    merged[key] = sameKind ? { ...(current as object), ...(value as object) } : value;
  }
  return kpfSpec(merged as KpfSpecInput);
}

/**
 * The spec in words, for reports and the CLI.
 * Example: describeKpfSpec(REFERENCE_SPEC) starts "log-linear, one economy at a time, annual growth".
 * Reference: none.
 */
export function describeKpfSpec(spec: KpfSpec): string {
  const smoothing =
    spec.smoothing.kind === "annual"
      ? "annual growth"
      : spec.smoothing.kind === "average"
        ? `${spec.smoothing.years}-year ${spec.smoothing.overlapping ? "moving" : "non-overlapping"} average growth`
        : spec.smoothing.method === "hp"
          ? `HP-trend growth (lambda ${spec.smoothing.lambda})`
          : `${spec.smoothing.years}-year rolling log-linear trend growth`;
  const restrictions = [
    spec.restrictions.gamma !== null ? `gamma = ${spec.restrictions.gamma}` : null,
    spec.restrictions.theta !== null ? `theta = ${spec.restrictions.theta}` : null,
  ].filter((x) => x !== null);
  const cov =
    spec.covariance.kind === "HAC"
      ? `HAC (Bartlett, lag ${spec.covariance.lags === "auto" ? "floor(4 (T/100)^(2/9))" : spec.covariance.lags}, ${spec.covariance.adjust ? "adjust T/(T-k)" : "no adjustment"})`
      : spec.covariance.kind === "HC"
        ? spec.covariance.type
        : spec.covariance.kind === "cluster"
          ? "clustered by economy (CR1)"
          : "classical";
  const n =
    spec.researchGrowth.kind === "given"
      ? `n = ${spec.researchGrowth.value} (given)`
      : `n from ${spec.researchGrowth.source} over ${spec.researchGrowth.window} years (${spec.researchGrowth.method})`;
  return [
    spec.form,
    spec.scope === "panel" ? "pooled panel with economy fixed effects" : "one economy at a time",
    spec.form === "cointegration" ? (spec.leadsLags > 0 ? `dynamic OLS with ${spec.leadsLags} leads and lags` : "static OLS") : smoothing,
    `inputs lagged ${spec.lagYears} year${spec.lagYears === 1 ? "" : "s"}`,
    restrictions.length > 0 ? restrictions.join(", ") : "no restrictions",
    `standard errors ${cov}`,
    `${Math.round(spec.level * 100)}% intervals`,
    n,
    `at least ${spec.minObservations} observations`,
    spec.bootstrap.draws > 0 ? `${spec.bootstrap.draws} bootstrap draws (seed ${spec.bootstrap.seed})` : "no bootstrap",
  ].join(", ");
}
