/**
 * Implementation of `ideafront tfp` (loaded only when the command runs): read the accounts, run
 * Tornqvist growth accounting per economy (lib/estimation tornqvistTfpGrowth), write the CSV.
 */
import { readFile, writeFile } from "node:fs/promises";
import { csvFormatRows } from "d3-dsv";
import { tornqvistTfpGrowth } from "../estimation/growth-accounting";
import type { TfpCommandOptions } from "./commands/tfp";
import { readAccountsCsv } from "./panel-csv";
import { csvNumber } from "./run-fit";
import { UsageError, progress } from "./shared";

/**
 * Tornqvist growth accounting of every economy of an accounts file as CSV text with columns
 * economy,year,tfp,tfp_growth (tfp an index, 1 in each economy's first year with all inputs;
 * tfp_growth the log change), plus notes (index restarts after gaps).
 * Throws InputFileError naming file, row and column for bad input.
 * Example: two complete years of "XAA" give rows XAA,2000,1, and XAA,2001,1.0100...,0.0100...
 * Reference: Feenstra, Inklaar & Timmer (2015), AER 105(10); tornqvistTfpGrowth of lib/estimation.
 */
export function tfpCsv(text: string, file: string): { csv: string; notes: string[]; economies: number } {
  const { economies } = readAccountsCsv(text, file);
  const rows: string[][] = [["economy", "year", "tfp", "tfp_growth"]];
  const notes: string[] = [];
  for (const [economy, accounts] of economies) {
    const result = tornqvistTfpGrowth(accounts);
    for (const w of result.warnings) notes.push(`${economy}: ${w}`);
    for (const y of result.years) rows.push([economy, String(y.year), csvNumber(y.tfpIndex), csvNumber(y.tfpGrowth)]);
  }
  return { csv: `${csvFormatRows(rows)}\n`, notes, economies: economies.size };
}

/**
 * The `tfp` command: read the accounts, run the growth accounting, write the CSV, notes on stderr.
 * Throws UsageError (exit code 2) for an unreadable file or bad input.
 * Example: runTfp({ accounts: "pwt.csv", out: "tfp.csv" }) writes tfp.csv.
 * Reference: issue 3 (the tfp command).
 */
export async function runTfp(opts: TfpCommandOptions): Promise<void> {
  let text: string;
  try {
    text = await readFile(opts.accounts, "utf8");
  } catch (err) {
    throw new UsageError(`Cannot read the accounts file ${opts.accounts}: ${(err as NodeJS.ErrnoException).code === "ENOENT" ? "no such file" : (err as Error).message}.`);
  }
  const { csv, notes, economies } = tfpCsv(text, opts.accounts);
  await writeFile(opts.out, csv);
  for (const note of notes) progress(note);
  progress(`Growth accounting for ${economies} economies; wrote ${opts.out}.`);
}
