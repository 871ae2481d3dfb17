/**
 * Simulated panels from the knowledge production function with known parameters, for Monte Carlo
 * checks and benchmarks. SIMULATED DATA: the economies are fictional (codes XAA, XAB, ...) and
 * nothing here is real; use it only to test estimators.
 *
 * Data-generating process, per economy e and year t = 1..T (DOMAIN.md section 2, discrete time with
 * inputs lagged one year, in the log-linear form the estimators assume):
 *   ln R_t = ln R_{t-1} + n_e + sigmaR * v_t                         (researchers: drift n_e)
 *   g_t    = B_e R_{t-1}^gamma A_{t-1}^(theta - 1) exp(sigmaU * u_t)   (growth of TFP, log points)
 *   ln A_t = ln A_{t-1} + g_t + sigmaA * w_t                          (observed TFP)
 * v, u, w independent standard normal. With sigmaA = 0 the log-linear regression on annual growth
 * is the true model (every g_t > 0); sigmaA > 0 adds measurement-like noise that makes some annual
 * changes non-positive (as in real data). B_e is set so that growth in year 1 equals g0_e. The true
 * long-run growth of economy e is g*_e = gamma n_e / (1 - theta).
 */
import type { Rng } from "./random";
import type { KpfEconomySeries } from "./kpf-sample";

export interface SimulateKpfOptions {
  readonly economies: number;
  readonly years: number;
  /** First calendar year (default 1975). */
  readonly firstYear?: number;
  readonly gamma: number;
  readonly theta: number;
  /** Drift of ln R per economy: [low, high], drawn uniformly (default [0.01, 0.04]). */
  readonly nRange?: readonly [number, number];
  /** Initial growth g0 per economy: [low, high], drawn uniformly (default [0.005, 0.03]). */
  readonly g0Range?: readonly [number, number];
  /** Standard deviation of the shocks to ln R (default 0.02). */
  readonly sigmaR?: number;
  /** Standard deviation of the log-growth shock (default 0.15). */
  readonly sigmaU?: number;
  /** Standard deviation of additive noise on ln A (default 0). */
  readonly sigmaA?: number;
}

/** A simulated panel with the truth behind it. */
export interface SimulatedKpfPanel {
  readonly panel: readonly KpfEconomySeries[];
  /** True drift n_e and g*_e = gamma n_e/(1 - theta) by economy, in panel order. */
  readonly truth: readonly { readonly economy: string; readonly n: number; readonly gStar: number; readonly logB: number }[];
}

/**
 * Fictional economy code number i (0-based): XAA, XAB, ..., XAZ, XBA, ... in the user-assigned
 * ISO 3166-1 range X.., so that simulated economies can never be mistaken for real ones.
 * Throws RangeError outside 0..675. Example: simulatedEconomyCode(27) -> "XBB"
 * Reference: ISO 3166-1 (codes XAA-XZZ are user-assigned).
 */
export function simulatedEconomyCode(i: number): string {
  if (!(Number.isInteger(i) && i >= 0 && i < 26 * 26)) throw new RangeError(`simulatedEconomyCode: i must be an integer in [0, 676), got ${i}`);
  return `X${String.fromCharCode(65 + Math.floor(i / 26))}${String.fromCharCode(65 + (i % 26))}`;
}

/**
 * Simulate a panel from the knowledge production function (see the module comment for the
 * process). Population is researchers / 0.004 (a constant research share), rounded.
 * Throws RangeError for non-positive sizes, theta >= 1, or ranges that are not [low <= high].
 * Example: simulateKpfPanel({ economies: 2, years: 45, gamma: 1, theta: -1 }, createRng(1)).panel[0].economy -> "XAA"
 * Reference: DOMAIN.md section 2 (model); Jones (1995), JPE 103(4) (g* = gamma n/(1 - theta)).
 */
export function simulateKpfPanel(options: SimulateKpfOptions, rng: Rng): SimulatedKpfPanel {
  const { economies, years, gamma, theta } = options;
  if (!(Number.isInteger(economies) && economies >= 1 && economies <= 676)) throw new RangeError(`simulateKpfPanel: economies must be an integer in [1, 676], got ${economies}`);
  if (!(Number.isInteger(years) && years >= 3)) throw new RangeError(`simulateKpfPanel: years must be an integer >= 3, got ${years}`);
  if (!(Number.isFinite(gamma) && Number.isFinite(theta) && theta < 1)) throw new RangeError(`simulateKpfPanel: needs finite gamma and theta < 1, got ${gamma}, ${theta}`);
  const [nLo, nHi] = options.nRange ?? [0.01, 0.04];
  const [gLo, gHi] = options.g0Range ?? [0.005, 0.03];
  if (!(nLo <= nHi) || !(gLo <= gHi) || !(gLo > 0)) throw new RangeError("simulateKpfPanel: nRange and g0Range must be [low <= high] with positive g0");
  const sigmaR = options.sigmaR ?? 0.02;
  const sigmaU = options.sigmaU ?? 0.15;
  const sigmaA = options.sigmaA ?? 0;
  const firstYear = options.firstYear ?? 1975;
  const panel: KpfEconomySeries[] = [];
  const truth: { economy: string; n: number; gStar: number; logB: number }[] = [];
  for (let e = 0; e < economies; e++) {
    const economy = simulatedEconomyCode(e);
    const n = nLo + (nHi - nLo) * rng.nextFloat64();
    const g0 = gLo + (gHi - gLo) * rng.nextFloat64();
    let lnR = Math.log(2e4 + 2e5 * rng.nextFloat64());
    let lnA = 0.3 * (rng.nextFloat64() - 0.5);
    const logB = Math.log(g0) - gamma * lnR - (theta - 1) * lnA;
    const yearList: number[] = [];
    const researchers: number[] = [];
    const tfp: number[] = [];
    const population: number[] = [];
    let observedLnA = lnA;
    for (let t = 0; t < years; t++) {
      if (t > 0) {
        const g = Math.exp(logB + gamma * lnR + (theta - 1) * lnA + sigmaU * rng.nextNormal());
        lnA += g;
        observedLnA = lnA + (sigmaA > 0 ? sigmaA * rng.nextNormal() : 0);
        lnR += n + sigmaR * rng.nextNormal();
      }
      yearList.push(firstYear + t);
      const r = Math.exp(lnR);
      researchers.push(r);
      tfp.push(Math.exp(observedLnA));
      population.push(Math.round(r / 0.004));
    }
    panel.push(Object.freeze({ economy, years: yearList, researchers, tfp, population }));
    truth.push(Object.freeze({ economy, n, gStar: (gamma * n) / (1 - theta), logB }));
  }
  return Object.freeze({ panel: Object.freeze(panel), truth: Object.freeze(truth) });
}
