/** `ideafront tfp`: TFP growth by Tornqvist growth accounting from national accounts. */
import type { Command } from "commander";

/** Options of `tfp` as commander hands them over. */
export interface TfpCommandOptions {
  accounts: string;
  out: string;
}

/**
 * Registers `tfp` on the program: options, help text, exit code 2 for usage errors; the
 * implementation (run-tfp.ts) is imported only when the command runs.
 * Example: register(new Command()) adds the "tfp" command.
 * Reference: commander 14 documentation (requiredOption, exitOverride).
 */
export function register(program: Command): void {
  program
    .command("tfp")
    .description("TFP growth by Tornqvist growth accounting from national accounts (output, employment, hours, human capital, capital services, labour share)")
    .requiredOption(
      "--accounts <file>",
      "accounts CSV: economy (or isocode), year, output (rgdpna), employment (emp), hours (avh), human_capital (hc), capital_services (rkna), labour_share (labsh); Penn World Table names accepted",
    )
    .requiredOption("--out <file>", "output CSV with columns economy,year,tfp,tfp_growth")
    .addHelpText(
      "after",
      `
dln A = dln Y - a dln(emp avh hc) - (1 - a) dln K, a = mean labour share of t and t-1.
tfp is an index, 1 in each economy's first year with all inputs (it restarts at 1 after a gap,
with a note on stderr); tfp_growth is the log change from the previous year. Empty = missing.
Errors in the accounts file name the row (header = row 1) and the column; exit code 2.`,
    )
    .exitOverride((err) => {
      process.exit(err.exitCode === 0 ? 0 : 2);
    })
    .action(async (opts: TfpCommandOptions) => {
      const { runTfp } = await import("../run-tfp");
      await runTfp(opts);
    });
}
