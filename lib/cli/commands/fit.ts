/** `ideafront fit`: estimate the knowledge production function for every economy of a panel file. */
import { type Command, InvalidArgumentError } from "commander";

function nonNegativeInteger(value: string): number {
  if (!/^\d+$/.test(value)) throw new InvalidArgumentError("must be a non-negative integer.");
  return Number(value);
}

function integer(value: string): number {
  if (!/^-?\d+$/.test(value) || !Number.isSafeInteger(Number(value))) throw new InvalidArgumentError("must be an integer.");
  return Number(value);
}

/** Options of `fit` as commander hands them over. */
export interface FitCommandOptions {
  panel: string;
  spec: string;
  draws?: number;
  seed?: number;
  out: string;
  details?: string;
  horizon?: number;
}

/**
 * Registers `fit` on the program: options, help text, exit code 2 for usage errors; the
 * implementation (run-fit.ts) is imported only when the command runs.
 * Example: register(new Command()) adds the "fit" command.
 * Reference: commander 14 documentation (requiredOption, exitOverride).
 */
export function register(program: Command): void {
  program
    .command("fit")
    .description("fit the knowledge production function dA/dt = B R^gamma A^theta to every economy of a panel file and write one row per economy")
    .requiredOption("--panel <file>", "panel CSV with columns economy,year,researchers,tfp,population (extra columns such as capital allowed; empty or NA = missing)")
    .option("--spec <name|file>", "named spec (reference, reference-panel, team-default) or a JSON spec file", "team-default")
    .option("--draws <n>", "bootstrap draws (overrides the spec; 0 = delta-method intervals only)", nonNegativeInteger)
    .option("--seed <s>", "bootstrap seed (overrides the spec)", integer)
    .requiredOption("--out <file>", "output CSV: one row per economy")
    .option("--details <file>", "also write every result with its details (intervals, sample years, methods) as JSON")
    .option("--horizon <years>", "with --details: transition path of g from today's growth, TFP projection and fan charts over this many years", nonNegativeInteger)
    .addHelpText(
      "after",
      `
Output columns: economy, nobs, gamma, theta, log_b, se_gamma, se_theta, n, gstar, gstar_lo,
gstar_hi, p_theta_ge_1, regime, warnings, then details (spec, role, level, interval method,
intervals of gamma and theta, kappa, sample years, dropped years, covariance, bootstrap).
Numbers at full precision; empty = not available; Inf = unbounded. warnings holds full
sentences separated by " | ". Single-economy specs are diagnostics; g* is a model-based
scenario with wide uncertainty, not a forecast.
Errors in the panel file name the row (header = row 1) and the column; exit code 2.`,
    )
    .exitOverride((err) => {
      process.exit(err.exitCode === 0 ? 0 : 2);
    })
    .action(async (opts: FitCommandOptions) => {
      const { runFit } = await import("../run-fit");
      await runFit(opts);
    });
}
