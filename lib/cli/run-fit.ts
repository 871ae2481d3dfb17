/**
 * Implementation of `ideafront fit` (loaded only when the command runs): read and validate the
 * panel, resolve the spec, estimate, write the CSV (and optionally JSON details).
 */
import { readFile, writeFile } from "node:fs/promises";
import { csvFormatRows } from "d3-dsv";
import { type KpfEconomyResult, estimateKpf } from "../estimation/kpf-estimate";
import { type KpfSpec, NAMED_KPF_SPECS } from "../estimation/kpf-spec";
import type { FitCommandOptions } from "./commands/fit";
import { readPanelCsv } from "./panel-csv";
import { UsageError, progress } from "./shared";

/** Header of the output CSV, in order. */
export const FIT_COLUMNS = [
  "economy",
  "nobs",
  "gamma",
  "theta",
  "log_b",
  "se_gamma",
  "se_theta",
  "n",
  "gstar",
  "gstar_lo",
  "gstar_hi",
  "p_theta_ge_1",
  "regime",
  "warnings",
  "spec",
  "role",
  "level",
  "gstar_interval_method",
  "gamma_lo",
  "gamma_hi",
  "theta_lo",
  "theta_hi",
  "gstar_se_delta",
  "kappa",
  "se_kappa",
  "beta",
  "se_beta",
  "first_year",
  "last_year",
  "nonpositive_dropped",
  "missing_inputs_dropped",
  "n_t0",
  "n_t1",
  "n_se",
  "covariance",
  "draws",
  "valid_draws",
  "block_length",
  "seed",
] as const;

/**
 * A number for the output CSV: full precision (shortest round-trip form), empty when not
 * available (null, NaN), Inf/-Inf when unbounded (as R writes them).
 * Example: csvNumber(0.1) -> "0.1"; csvNumber(Infinity) -> "Inf"; csvNumber(null) -> ""
 * Reference: ECMAScript Number.prototype.toString (shortest round-trip digits).
 */
export function csvNumber(x: number | null | undefined): string {
  if (x === null || x === undefined || Number.isNaN(x)) return "";
  if (x === Infinity) return "Inf";
  if (x === -Infinity) return "-Inf";
  return String(x);
}

function resultRow(r: KpfEconomyResult): string[] {
  const d = r.details;
  const years = d.sampleYears;
  return [
    r.economy,
    String(r.nobs),
    csvNumber(r.gamma),
    csvNumber(r.theta),
    csvNumber(r.logB),
    csvNumber(r.seGamma),
    csvNumber(r.seTheta),
    csvNumber(r.n),
    csvNumber(r.gStar),
    csvNumber(r.gStarLo),
    csvNumber(r.gStarHi),
    csvNumber(r.pThetaGe1),
    r.regime,
    r.warnings.join(" | "),
    d.spec,
    d.role,
    csvNumber(d.level),
    d.intervals.gStarBootstrap ? "bootstrap-percentile" : d.intervals.gStarDelta.method,
    csvNumber(d.intervals.gamma.lower),
    csvNumber(d.intervals.gamma.upper),
    csvNumber(d.intervals.theta.lower),
    csvNumber(d.intervals.theta.upper),
    csvNumber(d.gStarStandardError),
    csvNumber(d.kappa),
    csvNumber(d.seKappa),
    csvNumber(d.beta),
    csvNumber(d.seBeta),
    years.length > 0 ? String(years[0]) : "",
    years.length > 0 ? String(years[years.length - 1]) : "",
    String(d.nonPositiveYears.length),
    String(d.missingInputYears.length),
    csvNumber(d.researchGrowth?.t0),
    csvNumber(d.researchGrowth?.t1),
    csvNumber(d.researchGrowth?.standardError),
    d.covariance,
    d.bootstrap ? String(d.bootstrap.draws) : "0",
    d.bootstrap ? String(d.bootstrap.validDraws) : "",
    csvNumber(d.bootstrap?.blockLength),
    d.bootstrap ? String(d.bootstrap.seed) : "",
  ];
}

/**
 * The per-economy results as CSV text: the FIT_COLUMNS header, then one row per economy;
 * warnings joined by " | ".
 * Example: fitResultsCsv(estimateKpf(panel, REFERENCE_SPEC)).split("\n")[0] starts "economy,nobs,gamma,theta".
 * Reference: issue 3 (output columns); RFC 4180 via d3-dsv 3.
 */
export function fitResultsCsv(results: readonly KpfEconomyResult[]): string {
  return `${csvFormatRows([[...FIT_COLUMNS], ...results.map(resultRow)])}\n`;
}

async function resolveSpec(name: string): Promise<KpfSpec> {
  const named = (NAMED_KPF_SPECS as Record<string, KpfSpec>)[name];
  if (named) return named;
  if (!/\.json$/i.test(name)) {
    throw new UsageError(`--spec "${name}" is neither a named spec (${Object.keys(NAMED_KPF_SPECS).join(", ")}) nor a .json file.`);
  }
  let text: string;
  try {
    text = await readFile(name, "utf8");
  } catch (err) {
    throw new UsageError(`Cannot read the spec file ${name}: ${(err as NodeJS.ErrnoException).code === "ENOENT" ? "no such file" : (err as Error).message}.`);
  }
  const { kpfSpecFromJson, KpfSpecError } = await import("../schemas/kpf-spec");
  try {
    return kpfSpecFromJson(text, name);
  } catch (err) {
    if (err instanceof KpfSpecError) throw new UsageError(`Invalid spec file ${err.message}.`);
    throw err;
  }
}

/**
 * The `fit` command: read and validate the panel, resolve the spec (name or JSON file), estimate
 * every economy (estimateKpf), write the CSV and optional JSON details, summary on stderr.
 * Throws UsageError (exit code 2) for unreadable files, an unknown or invalid spec, or bad input
 * (InputFileError naming file, row and column).
 * Example: runFit({ panel: "p.csv", spec: "reference", out: "fit.csv" }) writes fit.csv.
 * Reference: issue 3 (the fit command).
 */
export async function runFit(opts: FitCommandOptions): Promise<void> {
  const started = performance.now();
  const spec = await resolveSpec(opts.spec);
  let text: string;
  try {
    text = await readFile(opts.panel, "utf8");
  } catch (err) {
    throw new UsageError(`Cannot read the panel file ${opts.panel}: ${(err as NodeJS.ErrnoException).code === "ENOENT" ? "no such file" : (err as Error).message}.`);
  }
  const { panel, hasCapital } = readPanelCsv(text, opts.panel);
  const readMs = performance.now() - started;
  if (spec.form === "capital-augmented" && !hasCapital) {
    throw new UsageError(`${opts.panel}, row 1: missing column "capital", needed by the capital-augmented form of spec ${spec.name}.`);
  }
  const draws = opts.draws ?? spec.bootstrap.draws;
  if (spec.form === "levels-nls" && draws > 0) {
    progress(`levels-nls refits the nonlinear model for each of the ${draws} bootstrap draws: this can take minutes for a panel (use --draws to reduce).`);
  }
  const fitStarted = performance.now();
  let lastReport = fitStarted;
  const results = estimateKpf(panel, spec, {
    draws: opts.draws,
    seed: opts.seed,
    horizon: opts.details ? (opts.horizon ?? 0) : 0,
    onProgress: (done, total) => {
      const now = performance.now();
      if (now - lastReport > 1000 && done < total) {
        progress(`  fitted ${done} of ${total} economies ...`);
        lastReport = now;
      }
    },
  });
  const fitMs = performance.now() - fitStarted;
  const writeStarted = performance.now();
  await writeFile(opts.out, fitResultsCsv(results));
  const writeMs = performance.now() - writeStarted;
  if (opts.details) await writeFile(opts.details, `${JSON.stringify(results, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? (Number.isNaN(v) ? null : v > 0 ? "Inf" : "-Inf") : v), 2)}\n`);
  const estimated = results.filter((r) => r.regime !== "no-estimate").length;
  progress(
    `Fitted ${estimated} of ${results.length} economies with spec ${spec.name} ` +
      `(${spec.scope === "panel" ? "pooled panel" : "single-economy diagnostics"}) in ${(fitMs / 1000).toFixed(2)} s ` +
      `(${((performance.now() - started) / 1000).toFixed(2)} s in the command: reading ${(readMs / 1000).toFixed(2)} s, writing ${(writeMs / 1000).toFixed(2)} s); wrote ${opts.out}.`,
  );
}
