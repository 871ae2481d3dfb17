/**
 * Estimation of a whole panel under one spec, ready for storage and for the command line: one
 * result per economy with economy, nobs, gamma, theta, logB, seGamma, seTheta, n, gStar, gStarLo,
 * gStarHi, pThetaGe1, regime and warnings in words, plus the details (intervals, sample years,
 * dropped years, methods, covariance, bootstrap settings). Composes fitKpf, kpfCovariance and
 * impliedGrowth; pure, no I/O.
 *
 * Reproducibility: each economy's bootstrap stream is createRng(economySeed(seed, economy)), so an
 * economy's result depends only on its own data, the spec and the seed, never on which other
 * economies are in the file: after a new vintage, only economies whose inputs changed need a refit
 * (compare kpfInputKey).
 */
import type { Regime } from "./dynamics";
import { type ImpliedGrowth, type IntervalEstimate, type ResearchGrowthUsed, type TransitionPath, impliedGrowth } from "./implied-growth";
import { kpfCovariance } from "./kpf-covariance";
import { type KpfFit, fitValidatedKpf } from "./kpf-fit";
import type { KpfEconomySeries, KpfPanel } from "./kpf-sample";
import { validateKpfPanel } from "./kpf-sample";
import { type KpfSpec, describeKpfSpec } from "./kpf-spec";
import { createRng } from "./random";

/** Details of one economy's result (everything behind the headline columns). */
export interface KpfResultDetails {
  readonly spec: string;
  readonly specDescription: string;
  readonly form: KpfSpec["form"];
  readonly scope: KpfSpec["scope"];
  /** "diagnostic" (single-economy fit) or "pooled" (panel). */
  readonly role: "diagnostic" | "pooled";
  readonly level: number;
  /** "OLS" or "NLS (Levenberg-Marquardt)". */
  readonly estimator: string;
  /** The covariance used, with its reference call. */
  readonly covariance: string;
  readonly intervals: {
    readonly gamma: IntervalEstimate;
    /** Interval of theta (theta + beta with capital). */
    readonly theta: IntervalEstimate;
    readonly gStarDelta: IntervalEstimate;
    readonly gStarBootstrap: IntervalEstimate | null;
  };
  readonly seLogB: number;
  readonly beta: number;
  readonly seBeta: number;
  readonly kappa: number;
  readonly seKappa: number;
  readonly gStarStandardError: number;
  /** Years (observation dates) of the rows used. */
  readonly sampleYears: readonly number[];
  readonly nonPositiveYears: readonly number[];
  readonly missingInputYears: readonly number[];
  /** Rows of the pooled fit (panel scope), else null. */
  readonly pooledObservations: number | null;
  readonly economiesInFit: number;
  readonly researchGrowth: ResearchGrowthUsed | null;
  readonly bootstrap: {
    readonly draws: number;
    readonly validDraws: number;
    readonly scheme: string;
    readonly blockLength: number | null;
    readonly seed: number;
  } | null;
  readonly regimeWords: string;
  readonly halfLife: number | null;
  readonly discreteSteadyState: number | null;
  readonly g0: number | null;
  readonly blowUpTime: number | null;
  /**
   * With options.horizon > 0: the transition path of g from g0 (closed form and integrator), the
   * TFP level projection and fan charts over the bootstrap draws; otherwise null.
   */
  readonly path: TransitionPath | null;
}

/** One economy's estimate, ready for storage and the command line. */
export interface KpfEconomyResult {
  readonly economy: string;
  /** Usable observations of this economy (its rows in the pooled fit for panels). */
  readonly nobs: number;
  readonly gamma: number;
  readonly theta: number;
  readonly logB: number;
  readonly seGamma: number;
  readonly seTheta: number;
  readonly n: number | null;
  /** Steady-state growth (log points a year) when converging, else null. */
  readonly gStar: number | null;
  /** Interval of g* at the spec's level (bootstrap percentile when drawn, else delta method); may be infinite. */
  readonly gStarLo: number;
  readonly gStarHi: number;
  readonly pThetaGe1: number | null;
  readonly regime: Regime | "not-identified" | "no-estimate";
  /** Every flag in words (full sentences). */
  readonly warnings: readonly string[];
  readonly details: KpfResultDetails;
}

export interface EstimateKpfOptions {
  /** Bootstrap draws (default: the spec's). */
  readonly draws?: number;
  /** Seed (default: the spec's). */
  readonly seed?: number;
  /** Horizon in years of the transition paths and TFP projections in the details (default 0: none). */
  readonly horizon?: number;
  /** Called after each economy (economy scope) or once (panel). */
  readonly onProgress?: (done: number, total: number, economy: string) => void;
}

/**
 * Seed of an economy's bootstrap stream: 32-bit FNV-1a hash of "<seed>:<economy>".
 * Example: economySeed(1, "XAA") is the same number on every run and machine.
 * Reference: G. Fowler, L. C. Noll and K.-P. Vo, FNV hash (IETF draft-eastlake-fnv).
 */
export function economySeed(seed: number, economy: string): number {
  const text = `${seed}:${economy}`;
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h;
}

/**
 * A key of everything an economy's estimate depends on under economy scope (its data and the spec),
 * for deciding which economies a new vintage makes stale.
 * Example: kpfInputKey(series, REFERENCE_SPEC) changes when any value of the series changes.
 * Reference: none (bookkeeping).
 */
export function kpfInputKey(series: KpfEconomySeries, spec: KpfSpec): string {
  return JSON.stringify([spec, series.economy, series.years, series.researchers, series.tfp, series.population ?? null, series.capital ?? null]);
}

/** describeKpfSpec of the last spec seen (one string per estimate, not per economy). */
let lastDescription: { spec: KpfSpec | null; text: string } = { spec: null, text: "" };
function described(spec: KpfSpec): string {
  if (lastDescription.spec !== spec) lastDescription = { spec, text: describeKpfSpec(spec) };
  return lastDescription.text;
}

const DIAGNOSTIC_WARNING =
  "Single-economy fit, a diagnostic: estimates of gamma and theta from one economy are imprecise and sensitive to the sample, the smoothing and the TFP measure; use a pooled spec for headline numbers.";

function noEstimate(economy: string, spec: KpfSpec, fit: KpfFit | null, nobs: number, warnings: string[]): KpfEconomyResult {
  const sample = fit?.samples.find((s) => s.economy === economy);
  const nan = Number.NaN;
  const none: IntervalEstimate = Object.freeze({ lower: nan, upper: nan, method: "none" as const });
  return Object.freeze({
    economy,
    nobs,
    gamma: nan,
    theta: nan,
    logB: nan,
    seGamma: nan,
    seTheta: nan,
    n: null,
    gStar: null,
    gStarLo: nan,
    gStarHi: nan,
    pThetaGe1: null,
    regime: "no-estimate" as const,
    warnings: Object.freeze(warnings),
    details: Object.freeze({
      spec: spec.name,
      specDescription: described(spec),
      form: spec.form,
      scope: spec.scope,
      role: spec.scope === "panel" ? ("pooled" as const) : ("diagnostic" as const),
      level: spec.level,
      estimator: spec.form === "levels-nls" ? "NLS (Levenberg-Marquardt)" : "OLS",
      covariance: "",
      intervals: Object.freeze({ gamma: none, theta: none, gStarDelta: none, gStarBootstrap: null }),
      seLogB: nan,
      beta: nan,
      seBeta: nan,
      kappa: nan,
      seKappa: nan,
      gStarStandardError: nan,
      sampleYears: Object.freeze(sample ? sample.rows.map((r) => r.year) : []),
      nonPositiveYears: sample?.nonPositiveYears ?? Object.freeze([]),
      missingInputYears: sample?.missingInputYears ?? Object.freeze([]),
      pooledObservations: null,
      economiesInFit: 0,
      researchGrowth: null,
      bootstrap: null,
      regimeWords: "No estimate.",
      halfLife: null,
      discreteSteadyState: null,
      g0: null,
      blowUpTime: null,
      path: null,
    }),
  });
}

/**
 * Knowledge production function estimates for every economy of a panel under one spec (economy
 * scope: one diagnostic fit per economy; panel scope: one pooled fit, each economy with its own
 * ln B, n and g*). Economies without an estimate (too few usable observations, rank deficiency)
 * get a row with NaN values, regime "no-estimate" and the reason in words. Results are sorted by
 * economy code.
 * Throws RangeError for an invalid panel (see validateKpfPanel) or options out of range.
 * Example: estimateKpf(panel, REFERENCE_SPEC)[0] -> { economy: "XAA", nobs: 34, gamma: 6.51..., ... }
 * Reference: composes fitKpf, kpfCovariance and impliedGrowth (see each).
 */
export function estimateKpf(panel: KpfPanel, spec: KpfSpec, options: EstimateKpfOptions = {}): readonly KpfEconomyResult[] {
  validateKpfPanel(panel);
  const draws = options.draws ?? spec.bootstrap.draws;
  if (!(Number.isInteger(draws) && draws >= 0)) throw new RangeError(`estimateKpf: draws must be a non-negative integer, got ${draws}`);
  const seed = options.seed ?? spec.bootstrap.seed;
  if (!Number.isSafeInteger(seed)) throw new RangeError(`estimateKpf: seed must be a safe integer, got ${seed}`);
  const sorted = [...panel].sort((a, b) => (a.economy < b.economy ? -1 : a.economy > b.economy ? 1 : 0));
  const results: KpfEconomyResult[] = [];
  if (spec.scope === "economy") {
    sorted.forEach((series, i) => {
      const fit = fitValidatedKpf([series], spec);
      if (!fit.estimated) {
        results.push(noEstimate(series.economy, spec, fit, fit.samples[0].rows.length, [...fit.warnings, DIAGNOSTIC_WARNING]));
      } else {
        const cov = kpfCovariance(fit);
        const implied = impliedGrowth(fit, cov, { draws, rng: createRng(economySeed(seed, series.economy)), horizon: options.horizon });
        results.push(economyResult(fit, cov, implied, 0, seed, [...fit.warnings], [DIAGNOSTIC_WARNING]));
      }
      options.onProgress?.(i + 1, sorted.length, series.economy);
    });
    return Object.freeze(results);
  }
  const fit = fitValidatedKpf(sorted, spec);
  const specific = new Map<string, string[]>();
  for (const s of fit.samples) specific.set(s.economy, [...s.warnings]);
  for (const x of fit.excluded) specific.get(x.economy)?.push(x.reason);
  const allSpecific = new Set([...specific.values()].flat());
  const general = fit.warnings.filter((w) => !allSpecific.has(w));
  if (!fit.estimated) {
    for (const s of fit.samples) results.push(noEstimate(s.economy, spec, fit, s.rows.length, [...(specific.get(s.economy) ?? []), ...general]));
    options.onProgress?.(1, 1, "panel");
    return Object.freeze(results);
  }
  // Clustering by economy needs two economies; with one left, Newey-West HAC instead, said in words.
  const clusterImpossible = spec.covariance.kind === "cluster" && fit.economies.length < 2;
  const cov = clusterImpossible ? kpfCovariance(fit, { kind: "HAC", lags: "auto", adjust: true }) : kpfCovariance(fit);
  if (clusterImpossible) {
    general.push(`Only one economy (${fit.economies[0]}) has enough observations for the pooled fit: standard errors are Newey-West HAC instead of clustered by economy.`);
  }
  const implied = impliedGrowth(fit, cov, { draws, rng: createRng(seed), horizon: options.horizon });
  const index = new Map(fit.economies.map((e, i) => [e, i]));
  for (const s of fit.samples) {
    const e = index.get(s.economy);
    const own = specific.get(s.economy) ?? [];
    if (e === undefined) {
      results.push(noEstimate(s.economy, spec, fit, s.rows.length, [...own, ...general]));
    } else {
      results.push(economyResult(fit, cov, implied, e, seed, [...own, ...general], []));
    }
  }
  results.sort((a, b) => (a.economy < b.economy ? -1 : a.economy > b.economy ? 1 : 0));
  options.onProgress?.(1, 1, "panel");
  return Object.freeze(results);
}

function economyResult(
  fit: KpfFit,
  cov: ReturnType<typeof kpfCovariance>,
  implied: ImpliedGrowth,
  e: number,
  seed: number,
  fitWarnings: string[],
  trailing: string[],
): KpfEconomyResult {
  const spec = fit.spec;
  const economy = fit.economies[e];
  const g = implied.economies[e];
  const se = cov.standardErrors;
  const capital = spec.form === "capital-augmented";
  const nobs = fit.rowEconomy.reduce((count, x) => count + (x === e ? 1 : 0), 0);
  const sample = fit.samples.find((s) => s.economy === economy)!;
  const warnings = [...fitWarnings, ...cov.warnings, ...implied.warnings, ...g.warnings, ...trailing];
  const bootstrap = implied.bootstrap;
  return Object.freeze({
    economy,
    nobs,
    gamma: fit.parameters.gamma,
    theta: fit.parameters.theta,
    logB: fit.parameters.logB[e],
    seGamma: se[0],
    seTheta: se[1],
    n: g.n.value,
    gStar: g.gStar,
    gStarLo: g.gStarInterval.lower,
    gStarHi: g.gStarInterval.upper,
    pThetaGe1: g.pThetaGe1,
    regime: g.regime,
    warnings: Object.freeze([...new Set(warnings)]),
    details: Object.freeze({
      spec: spec.name,
      specDescription: described(spec),
      form: spec.form,
      scope: spec.scope,
      role: fit.role,
      level: spec.level,
      estimator: spec.form === "levels-nls" ? "NLS (Levenberg-Marquardt)" : "OLS",
      covariance: cov.description,
      intervals: Object.freeze({
        gamma: g.gammaInterval,
        theta: capital ? Object.freeze({ ...g.regimeParameterInterval }) : g.regimeParameterInterval,
        gStarDelta: g.gStarDelta,
        gStarBootstrap: g.gStarBootstrap,
      }),
      seLogB: se[4 + e],
      beta: fit.parameters.beta,
      seBeta: se[2],
      kappa: fit.parameters.kappa,
      seKappa: se[3],
      gStarStandardError: g.gStarStandardError,
      sampleYears: Object.freeze(sample.rows.map((r) => r.year)),
      nonPositiveYears: sample.nonPositiveYears,
      missingInputYears: sample.missingInputYears,
      pooledObservations: spec.scope === "panel" ? fit.rows.length : null,
      economiesInFit: fit.economies.length,
      researchGrowth: g.n,
      bootstrap: bootstrap
        ? Object.freeze({
            draws: bootstrap.draws,
            validDraws: g.bootstrapDraws.valid,
            scheme: bootstrap.scheme,
            blockLength: bootstrap.blockLength,
            seed: spec.scope === "panel" ? seed : economySeed(seed, economy),
          })
        : null,
      regimeWords: g.regimeWords,
      halfLife: g.halfLife.years,
      discreteSteadyState: g.discreteSteadyState,
      g0: g.g0.value,
      blowUpTime: g.blowUpTime,
      path: g.path,
    }),
  });
}
