/**
 * Scenarios of long-run growth: the path of knowledge growth g and of the TFP level under a stated
 * research-labour growth (a constant n, or a year-by-year path such as a population projection),
 * from estimated gamma and theta, with fan charts over bootstrap draws. A scenario is a separate
 * value computed from a fit's parameters; it never refits. Reuses dynamics.ts: closed-form logistic
 * path for constant n, Dormand-Prince integration for any path of n.
 */
import {
  type FanChart,
  type LongRunGrowth,
  type ResearchGrowthScenario,
  fanChart,
  integrateGrowthPath,
  longRunGrowth,
  projectTfpLevel,
  transitionPathClosedForm,
} from "./dynamics";
import type { EconomyImpliedGrowth } from "./implied-growth";
import type { KpfBootstrap } from "./kpf-bootstrap";
import type { KpfFit } from "./kpf-fit";

/** Input of growthScenario. */
export interface GrowthScenarioInput {
  /** A name for the scenario (e.g. "UN medium variant"). */
  readonly label?: string;
  readonly gamma: number;
  readonly theta: number;
  /** Research-labour growth in log points a year: constant, one value per year from today, or a function of t. */
  readonly n: ResearchGrowthScenario;
  /** Today's growth of TFP (positive, log points a year). */
  readonly g0: number;
  /** Horizon in years (positive integer). */
  readonly years: number;
  /** Today's TFP level (default 1: the path is then an index). */
  readonly A0?: number;
  /** Bootstrap draws of the structural parameters for fan charts (null: no fans). */
  readonly bootstrap?: KpfBootstrap | null;
  /** At most this many draws enter the fans (default 200; the first ones). */
  readonly fanDraws?: number;
  /** Fan quantiles (default 0.05, 0.25, 0.5, 0.75, 0.95). */
  readonly quantiles?: readonly number[];
}

/** A growth scenario's paths. */
export interface GrowthScenario {
  readonly label: string;
  /** Years from today: 0, 1, ..., years. */
  readonly times: readonly number[];
  /** g(t) by numerical integration (any n). */
  readonly growth: readonly (number | null)[];
  /** g(t) in closed form (constant n only), else null. */
  readonly closedForm: readonly (number | null)[] | null;
  /** Long-run growth and regime (constant n only), else null. */
  readonly longRun: LongRunGrowth | null;
  /** TFP level along the integrated path. */
  readonly level: readonly (number | null)[];
  readonly growthFan: FanChart | null;
  readonly levelFan: FanChart | null;
  readonly warnings: readonly string[];
}

/**
 * Growth scenario: g(t) from dg/dt = gamma n(t) g + (theta - 1) g^2 starting at g0 (numerical, any
 * n; plus the closed-form logistic and the long-run growth when n is constant), the TFP level
 * A(t) = A0 exp(integral of g), and fan charts of g and A over bootstrap draws of (gamma, theta)
 * (paths that blow up count as +infinity in the fans).
 * Throws RangeError (from dynamics.ts) for g0 <= 0, a bad horizon or a short n path, and for
 * fanDraws < 1.
 * Example: growthScenario({ gamma: 0.5, theta: 0.5, n: 0.01, g0: 0.03, years: 100 }).growth[100]
 *   -> 0.0167884887859... (DOMAIN.md section 2: 0.0167885)
 * Reference: DOMAIN.md section 2 [computed]; Jones (1995), JPE 103(4); Dormand & Prince (1980).
 */
export function growthScenario(input: GrowthScenarioInput): GrowthScenario {
  const { gamma, theta, n, g0, years } = input;
  const A0 = input.A0 ?? 1;
  const constant = typeof n === "number";
  const integrated = integrateGrowthPath({ gamma, theta, n, g0, years, step: 1 });
  const closed = constant ? transitionPathClosedForm({ gamma, theta, n, g0, years, step: 1 }) : null;
  const warnings = [...integrated.warnings];
  const level = projectTfpLevel({ A0, growth: integrated.growth }).level;
  let growthFan: FanChart | null = null;
  let levelFan: FanChart | null = null;
  const bootstrap = input.bootstrap ?? null;
  if (bootstrap !== null && bootstrap.draws > 0) {
    const limit = input.fanDraws ?? 200;
    if (!(Number.isInteger(limit) && limit >= 1)) throw new RangeError(`growthScenario: fanDraws must be a positive integer, got ${limit}`);
    const growthPaths: (number | null)[][] = [];
    const levelPaths: (number | null)[][] = [];
    const S = bootstrap.structural;
    for (let d = 0; d < bootstrap.draws && growthPaths.length < limit; d++) {
      const gd = S[4 * d];
      const td = S[4 * d + 1];
      if (!Number.isFinite(gd) || !Number.isFinite(td)) continue;
      const path = constant
        ? transitionPathClosedForm({ gamma: gd, theta: td, n, g0, years, step: 1 }).growth
        : integrateGrowthPath({ gamma: gd, theta: td, n, g0, years, step: 1, relativeTolerance: 1e-8 }).growth;
      growthPaths.push(path);
      levelPaths.push(projectTfpLevel({ A0, growth: path }).level);
    }
    if (growthPaths.length > 0) {
      const q = input.quantiles ?? [0.05, 0.25, 0.5, 0.75, 0.95];
      growthFan = fanChart(growthPaths, q, { missing: "infinite" });
      levelFan = fanChart(levelPaths, q, { missing: "infinite" });
    } else {
      warnings.push("No bootstrap draw has finite gamma and theta: no fan chart.");
    }
  }
  return Object.freeze({
    label: input.label ?? (constant ? `n = ${n}` : "research-labour path"),
    times: integrated.times,
    growth: integrated.growth,
    closedForm: closed ? closed.growth : null,
    longRun: constant ? longRunGrowth({ gamma, theta, n }) : null,
    level,
    growthFan,
    levelFan,
    warnings: Object.freeze(warnings),
  });
}

/**
 * A scenario for one economy of a fit: gamma, theta, today's growth g0 and the last TFP level
 * from the fit and its implied growth, with n (or the research-labour path) overridden.
 * Throws RangeError when the economy has no usable g0 (non-positive trailing growth) and none is
 * given, when gamma or theta is not identified, or when the economy is not in the fit.
 * Example: scenarioForEconomy(fit, implied.economies[0], { n: 0.005, years: 50, label: "slower research growth" })
 * Reference: as growthScenario.
 */
export function scenarioForEconomy(
  fit: KpfFit,
  implied: EconomyImpliedGrowth,
  overrides: { readonly n?: ResearchGrowthScenario; readonly g0?: number; readonly years: number; readonly label?: string; readonly fanDraws?: number },
  bootstrap: KpfBootstrap | null = null,
): GrowthScenario {
  const e = fit.economies.indexOf(implied.economy);
  if (e < 0) throw new RangeError(`scenarioForEconomy: economy ${implied.economy} is not in the fit`);
  const { gamma, theta } = fit.parameters;
  if (!Number.isFinite(gamma) || !Number.isFinite(theta)) throw new RangeError("scenarioForEconomy: gamma and theta must both be identified (fix one in the cointegration form)");
  const g0 = overrides.g0 ?? implied.g0.value;
  if (g0 === null || !(g0 > 0)) throw new RangeError(`scenarioForEconomy: ${implied.economy} has no positive g0 (trailing TFP growth ${g0}); give one`);
  const n = overrides.n ?? implied.n.value;
  if (n === null) throw new RangeError(`scenarioForEconomy: ${implied.economy} has no n; give one`);
  const tfp = fit.data[e].tfp;
  let A0 = 1;
  for (let i = tfp.length - 1; i >= 0; i--) {
    const v = tfp[i];
    if (v !== null) {
      A0 = v;
      break;
    }
  }
  return growthScenario({ label: overrides.label, gamma, theta, n, g0, years: overrides.years, A0, bootstrap, fanDraws: overrides.fanDraws });
}
