/**
 * Bootstrap of the structural parameters of a knowledge production function fit (gamma, theta,
 * beta, kappa per draw), for percentile intervals of g* and P(theta >= 1). Each path refits the
 * model on resampled observations:
 *
 * - one economy, linear forms: moving blocks of consecutive sample rows (Kunsch 1989), refit by
 *   `bootstrapOls` of lib/estimation (block sums precomputed; no allocation per draw);
 * - a panel, linear forms: the fixed-effects slopes by the within transformation (equal to the
 *   dummy-variable slopes) on a resample of the panel, scheme from the spec: whole economies drawn
 *   with replacement ("economies", the analogue of clustering by economy), moving blocks of years
 *   within each economy ("within-economy") or the same blocks of years for all economies
 *   ("common-years", via createPanelBlockBootstrap); work arrays preallocated, no allocation per draw;
 * * - levels-nls: a Levenberg-Marquardt refit per draw started at the full-sample estimate (at most
 *   100 iterations, no geodesic acceleration; a refit that does not converge counts as failed; this
 *   path allocates per draw and is far slower; "economies" falls back to "within-economy").
 *
 * References: H. R. Kunsch (1989), Annals of Statistics 17(3); D. N. Politis and H. White (2004),
 * Econometric Reviews 23(1) (block length ~ T^(1/3)); A. C. Cameron, J. B. Gelbach and D. L. Miller
 * (2008), Rev. Economics and Statistics 90(3) (resampling whole clusters); S. Goncalves (2011),
 * Econometric Theory 27(5) (moving blocks for panels with fixed effects).
 */
import { bootstrapOls, createPanelBlockBootstrap, defaultBlockLength, movingBlockIndices } from "./bootstrap";
import { type KpfFit, structuralFromCoefficients } from "./kpf-fit";
import { choleskyInPlace, choleskySolveInPlace } from "./linalg";
import { nls } from "./nls";
import type { Rng } from "./random";

/** Bootstrap draws of the structural parameters. */
export interface KpfBootstrap {
  readonly draws: number;
  /** "moving-blocks" (one economy) or the panel scheme actually used; "+nls-refit" for levels-nls. */
  readonly scheme: string;
  /** Block length in observations (years); null when whole economies are drawn or each economy uses its own default. */
  readonly blockLength: number | null;
  /** draws x 4, row-major: gamma, theta, beta, kappa of draw d at [4d, 4d + 4); NaN rows for failed draws. */
  readonly structural: Float64Array;
  /** Draws whose refit failed (singular resample or no convergence). */
  readonly failedDraws: number;
  readonly warnings: readonly string[];
}

export interface KpfBootstrapOptions {
  /** Number of draws (default: the spec's). */
  readonly draws?: number;
  /** Seeded generator (required). */
  readonly rng: Rng;
  /** Block length (default: the spec's; "auto" = round(T^(1/3))). */
  readonly blockLength?: number | "auto";
}

/**
 * Moving-block bootstrap of a KPF fit's structural parameters (see the module comment for the
 * resampling of one economy, of a panel, and of levels-nls fits). Deterministic given the rng state.
 * Throws RangeError for an unestimated fit, a negative or non-integer number of draws, or a missing rng.
 * Example: bootstrapKpf(fit, { draws: 999, rng: createRng(1) }).structural holds 999 x 4 values.
 * Reference: Kunsch (1989); Politis & White (2004); Cameron, Gelbach & Miller (2008).
 */
export function bootstrapKpf(fit: KpfFit, options: KpfBootstrapOptions): KpfBootstrap {
  if (!fit.estimated || fit.regression === null) throw new RangeError("bootstrapKpf: the fit has no estimate");
  const draws = options.draws ?? fit.spec.bootstrap.draws;
  if (!(Number.isInteger(draws) && draws >= 0)) throw new RangeError(`bootstrapKpf: draws must be a non-negative integer, got ${draws}`);
  if (!options.rng || typeof options.rng.nextInt !== "function") throw new RangeError("bootstrapKpf: a seeded rng is required (createRng(seed))");
  const blockOption = options.blockLength ?? fit.spec.bootstrap.blockLength;
  if (fit.spec.form === "levels-nls") return bootstrapNls(fit, draws, options.rng, blockOption);
  if (fit.economies.length === 1) return bootstrapEconomy(fit, draws, options.rng, blockOption);
  return bootstrapPanelLinear(fit, draws, options.rng, blockOption);
}

function resolveBlock(option: number | "auto", observations: number): number {
  return Math.min(observations, option === "auto" ? defaultBlockLength(observations) : option);
}

function bootstrapEconomy(fit: KpfFit, draws: number, rng: Rng, blockOption: number | "auto"): KpfBootstrap {
  const regression = fit.regression!;
  const n = regression.observations;
  const blockLength = resolveBlock(blockOption, n);
  const result = bootstrapOls(regression.design, regression.response, { draws, rng, blockLength });
  const k = result.columns;
  const structural = new Float64Array(draws * 4);
  for (let d = 0; d < draws; d++) structuralFromCoefficients(fit.layout, result.coefficients, d * k, structural, d * 4);
  return Object.freeze({
    draws,
    scheme: "moving-blocks",
    blockLength,
    structural,
    failedDraws: result.failedDraws,
    warnings: Object.freeze(result.warnings.map((w) => `${w.message}.`)),
  });
}

function bootstrapPanelLinear(fit: KpfFit, draws: number, rng: Rng, blockOption: number | "auto"): KpfBootstrap {
  const regression = fit.regression!;
  const n = regression.observations;
  const E = fit.economies.length;
  const k = regression.coefficients.length;
  // Slope columns: everything but the intercept (column 0) and the E - 1 dummies (the last columns).
  const p = k - E;
  const slopeColumns = Array.from({ length: p }, (_, j) => 1 + j);
  const x = regression.design.data;
  const y = regression.response;
  const economyOf = fit.rowEconomy;
  // Centre each economy's columns and response on its full-sample means (within-invariant, better conditioned).
  const counts = new Float64Array(E);
  const meanX = new Float64Array(E * p);
  const meanY = new Float64Array(E);
  for (let i = 0; i < n; i++) {
    const e = economyOf[i];
    counts[e]++;
    meanY[e] += y[i];
    for (let j = 0; j < p; j++) meanX[e * p + j] += x[i + slopeColumns[j] * n];
  }
  for (let e = 0; e < E; e++) {
    meanY[e] /= counts[e];
    for (let j = 0; j < p; j++) meanX[e * p + j] /= counts[e];
  }
  const xc = new Float64Array(n * p); // row-major: row i at [i p, i p + p)
  const yc = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const e = economyOf[i];
    yc[i] = y[i] - meanY[e];
    for (let j = 0; j < p; j++) xc[i * p + j] = x[i + slopeColumns[j] * n] - meanX[e * p + j];
  }
  const structural = new Float64Array(draws * 4);
  const coefficients = new Float64Array(k);
  const normal = new Float64Array(p * p);
  const rhs = new Float64Array(p);
  let failed = 0;
  const warnings: string[] = [];
  const scheme = fit.spec.bootstrap.panelScheme;
  let blockLength: number | null = null;

  const finishDraw = (d: number): void => {
    if (p === 0) {
      structuralFromCoefficients(fit.layout, coefficients, 0, structural, d * 4);
      return;
    }
    if (!choleskyInPlace(normal, p, 1e-10)) {
      failed++;
      structural.fill(Number.NaN, d * 4, d * 4 + 4);
      return;
    }
    choleskySolveInPlace(normal, p, rhs);
    for (let j = 0; j < p; j++) coefficients[slopeColumns[j]] = rhs[j];
    structuralFromCoefficients(fit.layout, coefficients, 0, structural, d * 4);
  };

  if (scheme === "economies") {
    // Per-economy within moments, then sums over economies drawn with replacement.
    const W = new Float64Array(E * p * p);
    const w = new Float64Array(E * p);
    for (let i = 0; i < n; i++) {
      const e = economyOf[i];
      for (let a = 0; a < p; a++) {
        const xa = xc[i * p + a];
        w[e * p + a] += xa * yc[i];
        for (let c = 0; c <= a; c++) W[e * p * p + a + c * p] += xa * xc[i * p + c];
      }
    }
    for (let d = 0; d < draws; d++) {
      normal.fill(0);
      rhs.fill(0);
      for (let g = 0; g < E; g++) {
        const e = rng.nextInt(E);
        const off = e * p * p;
        for (let a = 0; a < p; a++) {
          rhs[a] += w[e * p + a];
          for (let c = 0; c <= a; c++) normal[a + c * p] += W[off + a + c * p];
        }
      }
      finishDraw(d);
    }
  } else {
    const periods = Float64Array.from(fit.rows, (r) => r.year);
    const sampler = createPanelBlockBootstrap(
      { groups: economyOf, periods },
      {
        scheme: scheme === "common-years" ? "common-periods" : "within-group",
        blockLength: blockOption === "auto" ? undefined : blockOption,
      },
    );
    blockLength = sampler.blockLength;
    const indices = new Int32Array(sampler.maxRows);
    const sumCount = new Float64Array(E);
    const sumX = new Float64Array(E * p);
    const sumY = new Float64Array(E);
    const sumXX = new Float64Array(E * p * p);
    const sumXY = new Float64Array(E * p);
    for (let d = 0; d < draws; d++) {
      const count = sampler.draw(rng, indices);
      sumCount.fill(0);
      sumX.fill(0);
      sumY.fill(0);
      sumXX.fill(0);
      sumXY.fill(0);
      for (let r = 0; r < count; r++) {
        const i = indices[r];
        const e = economyOf[i];
        sumCount[e]++;
        sumY[e] += yc[i];
        for (let a = 0; a < p; a++) {
          const xa = xc[i * p + a];
          sumX[e * p + a] += xa;
          sumXY[e * p + a] += xa * yc[i];
          for (let c = 0; c <= a; c++) sumXX[e * p * p + a + c * p] += xa * xc[i * p + c];
        }
      }
      normal.fill(0);
      rhs.fill(0);
      for (let e = 0; e < E; e++) {
        const m = sumCount[e];
        if (m < 2) continue;
        for (let a = 0; a < p; a++) {
          rhs[a] += sumXY[e * p + a] - (sumX[e * p + a] * sumY[e]) / m;
          for (let c = 0; c <= a; c++) normal[a + c * p] += sumXX[e * p * p + a + c * p] - (sumX[e * p + a] * sumX[e * p + c]) / m;
        }
      }
      finishDraw(d);
    }
  }
  if (failed > 0) warnings.push(`${failed} of ${draws} bootstrap draws had a singular resampled design and were left out.`);
  if (scheme === "economies" && E < 10) {
    warnings.push(`Only ${E} economies to resample: bootstrap intervals that draw whole economies are unreliable with fewer than about 10.`);
  }
  return Object.freeze({
    draws,
    scheme,
    blockLength,
    structural,
    failedDraws: failed,
    warnings: Object.freeze(warnings),
  });
}

function bootstrapNls(fit: KpfFit, draws: number, rng: Rng, blockOption: number | "auto"): KpfBootstrap {
  const regression = fit.regression!;
  const n = regression.observations;
  const E = fit.economies.length;
  const rows = fit.rows;
  const layout = fit.layout;
  const { lnR: mR, lnA: mA } = fit.centring;
  const start = regression.coefficients;
  const pCount = start.length;
  const firstC = pCount - E;
  const warnings: string[] = [];
  let scheme: string;
  let blockLength: number | null;
  let drawIndices: (out: Int32Array) => number;
  let capacity = n;
  if (E === 1) {
    blockLength = resolveBlock(blockOption, n);
    scheme = "moving-blocks+nls-refit";
    drawIndices = (out) => {
      movingBlockIndices(n, rng, { blockLength: blockLength as number }, out);
      return n;
    };
  } else {
    const panelScheme = fit.spec.bootstrap.panelScheme === "common-years" ? "common-periods" : "within-group";
    if (fit.spec.bootstrap.panelScheme === "economies") {
      warnings.push('levels-nls resamples blocks of years within each economy: the "economies" scheme is not available for this form.');
    }
    const sampler = createPanelBlockBootstrap(
      { groups: fit.rowEconomy, periods: Float64Array.from(rows, (r) => r.year) },
      { scheme: panelScheme, blockLength: blockOption === "auto" ? undefined : blockOption },
    );
    blockLength = sampler.blockLength;
    capacity = sampler.maxRows;
    scheme = `${panelScheme === "common-periods" ? "common-years" : "within-economy"}+nls-refit`;
    drawIndices = (out) => sampler.draw(rng, out);
  }
  const indices = new Int32Array(capacity);
  const structural = new Float64Array(draws * 4);
  let failed = 0;
  for (let d = 0; d < draws; d++) {
    const m = drawIndices(indices);
    const response = new Float64Array(m);
    const cR = new Float64Array(m);
    const cA = new Float64Array(m);
    const econ = new Int32Array(m);
    for (let r = 0; r < m; r++) {
      const i = indices[r];
      response[r] = rows[i].growth;
      cR[r] = rows[i].lnR - mR;
      cA[r] = rows[i].lnA - mA;
      econ[r] = fit.rowEconomy[i];
    }
    const gammaAt = (b: Float64Array): number => (layout.gamma >= 0 ? b[layout.gamma] : (layout.gammaFixed as number));
    const thetaAt = (b: Float64Array): number => (layout.theta >= 0 ? b[layout.theta] : (layout.thetaFixed as number));
    let ok = m >= pCount;
    let coefficients: Float64Array = start;
    if (ok) {
      try {
        const refit = nls(
          {
            response,
            predict: (b, out) => {
              const g = gammaAt(b);
              const t = thetaAt(b);
              for (let i = 0; i < m; i++) out[i] = Math.exp(b[firstC + econ[i]] + g * cR[i] + t * cA[i]);
            },
            jacobian: (b, out) => {
              const g = gammaAt(b);
              const t = thetaAt(b);
              out.fill(0);
              for (let i = 0; i < m; i++) {
                const f = Math.exp(b[firstC + econ[i]] + g * cR[i] + t * cA[i]);
                if (layout.gamma >= 0) out[i + layout.gamma * m] = f * cR[i];
                if (layout.theta >= 0) out[i + layout.theta * m] = f * cA[i];
                out[i + (firstC + econ[i]) * m] = f;
              }
            },
          },
          start,
          { maxIterations: 100, geodesicAcceleration: false },
        );
        ok = refit.converged;
        coefficients = refit.coefficients;
      } catch {
        ok = false;
      }
    }
    if (!ok) {
      failed++;
      structural.fill(Number.NaN, d * 4, d * 4 + 4);
      continue;
    }
    structuralFromCoefficients(layout, coefficients, 0, structural, d * 4);
  }
  if (failed > 0) warnings.push(`${failed} of ${draws} bootstrap refits did not converge and were left out.`);
  return Object.freeze({ draws, scheme, blockLength, structural, failedDraws: failed, warnings: Object.freeze(warnings) });
}
