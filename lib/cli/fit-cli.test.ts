// `ideafront fit` end to end: in process through commander (the registered command and its lazy
// implementation), and as a separate process of the compiled command line (exit codes, stderr).
// Panels: test/reference/synthetic-panel.csv (INVENTED, compared with R: test/reference/r-reference.json)
// and test/fixtures/panels (SIMULATED, see their README).
import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { Command } from "commander";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { register as registerFit } from "./commands/fit";
import { FIT_COLUMNS } from "./run-fit";

const root = path.resolve(import.meta.dirname, "../..");
const fixtures = path.join(root, "test/fixtures/panels");
const referencePanel = path.join(root, "test/reference/synthetic-panel.csv");
const referenceFile = path.join(root, "test/reference/r-reference.json");
const hasReference = existsSync(referencePanel) && existsSync(referenceFile);
if (!hasReference) console.warn(`SKIP CLI comparison with R: ${referenceFile} or ${referencePanel} not found`);
const work = mkdtempSync(path.join(tmpdir(), "ideafront-fit-"));

async function fitInProcess(args: string[]): Promise<void> {
  const program = new Command();
  program.exitOverride();
  registerFit(program);
  await program.parseAsync(["node", "ideafront", "fit", ...args]);
}

function readCsv(file: string): Record<string, string>[] {
  return parse(readFileSync(file, "utf8"), { columns: true }) as Record<string, string>[];
}

function relative(actual: string, expected: number): number {
  return Math.abs(Number(actual) - expected) / Math.abs(expected);
}

describe.skipIf(!hasReference)("fit on the R reference panel", () => {
  it("writes the reference spec's coefficients, HAC standard errors and n as R computes them", async () => {
    const out = path.join(work, "reference.csv");
    process.env.IDEAFRONT_QUIET = "1";
    await fitInProcess(["--panel", referencePanel, "--spec", "reference", "--draws", "0", "--out", out]);
    const rows = readCsv(out);
    const reference = JSON.parse(readFileSync(referenceFile, "utf8"));
    expect(rows.map((r) => r.economy)).toEqual(Object.keys(reference.economies).sort());
    for (const row of rows) {
      const ref = reference.economies[row.economy];
      expect(Number(row.nobs)).toBe(ref.observations);
      expect(relative(row.gamma, ref.coefficients.lnR)).toBeLessThan(1e-10); // R 4.2.2 lm coef lnR, r-reference.json, rel 1e-10
      expect(Math.abs(Number(row.theta) - 1 - ref.coefficients.lnA)).toBeLessThan(1e-10 * Math.abs(ref.coefficients.lnA)); // 1 + lnA coef, rel 1e-10
      expect(relative(row.log_b, ref.coefficients["(Intercept)"])).toBeLessThan(1e-10); // R lm intercept, rel 1e-10
      expect(relative(row.se_gamma, ref.se.NeweyWest.lnR)).toBeLessThan(1e-8); // R sandwich::NeweyWest(m, lag = L, prewhite = FALSE, adjust = TRUE), rel 1e-8
      expect(relative(row.se_theta, ref.se.NeweyWest.lnA)).toBeLessThan(1e-8); // same call, lnA, rel 1e-8
      expect(relative(row.n, ref.researcherGrowth.n)).toBeLessThan(1e-12); // R (log R_t1 - log R_t0)/(t1 - t0), rel 1e-12
      expect(row.spec).toBe("reference");
        expect(row.gstar_interval_method).toBe(row.regime === "converging" ? "delta" : "none"); // --draws 0: delta method, none without a steady state
      expect(row.warnings).toMatch(/Single-economy fit, a diagnostic/);
    }
  });

  it("writes the reference-panel spec's pooled theta and CR1 standard error as R computes them", async () => {
    const out = path.join(work, "reference-panel.csv");
    await fitInProcess(["--panel", referencePanel, "--spec", "reference-panel", "--draws", "0", "--out", out]);
    const rows = readCsv(out);
    const pooled = JSON.parse(readFileSync(referenceFile, "utf8")).pooled;
    for (const row of rows) {
      expect(row.gamma).toBe("1");
      expect(Math.abs(Number(row.theta) - 1 - pooled.coefficients[1])).toBeLessThan(1e-10 * Math.abs(pooled.coefficients[1])); // R lm, rel 1e-10
      expect(relative(row.se_theta, pooled.seClusterHC1[1])).toBeLessThan(1e-8); // R sandwich::vcovCL(m, cluster = ~economy, type = "HC1"), rel 1e-8
      expect(Number(row.gstar)).toBeCloseTo(Number(row.n) / (1 - Number(row.theta)), 15); // g* = n/(1 - theta)
    }
    expect(relative(rows[0].log_b, pooled.coefficients[0])).toBeLessThan(1e-10); // first economy: the intercept
  });
});

describe("fit on a simulated panel", () => {
  it("writes the documented columns, warnings as sentences, and JSON details", async () => {
    const out = path.join(work, "team.csv");
    const details = path.join(work, "team.json");
    await fitInProcess(["--panel", path.join(fixtures, "simulated-12x30.csv"), "--draws", "99", "--seed", "5", "--out", out, "--details", details, "--horizon", "20"]);
    const text = readFileSync(out, "utf8");
    expect(text.split("\n")[0]).toBe(FIT_COLUMNS.join(","));
    const rows = readCsv(out);
    expect(rows).toHaveLength(12);
    expect(rows[0]).toMatchObject({ spec: "team-default", role: "pooled", level: "0.9", draws: "99", seed: "5", gstar_interval_method: "bootstrap-percentile" });
    for (const row of rows) {
      expect(Number(row.gstar_lo)).toBeLessThanOrEqual(Number(row.gstar));
      expect(Number(row.gstar_hi)).toBeGreaterThanOrEqual(Number(row.gstar));
      for (const sentence of row.warnings.split(" | ").filter((s) => s.length > 0)) expect(sentence).toMatch(/[.)]$/);
    }
    const json = JSON.parse(readFileSync(details, "utf8"));
    expect(json).toHaveLength(12);
    expect(json[0].details.bootstrap).toMatchObject({ draws: 99, scheme: "economies", seed: 5 });
    const transition = json[0].details.path;
    expect(transition.times).toHaveLength(21);
    expect(transition.maxDifference).toBeLessThan(1e-9); // closed-form logistic vs Dormand-Prince, issue 3: 1e-9
    expect(transition.levelFan.bands).toHaveLength(5);
    expect(transition.level[0]).toBeGreaterThan(0);
  });

  it("accepts a JSON spec file with a base, and names the field of a bad one", async () => {
    const good = path.join(work, "spec.json");
    writeFileSync(good, JSON.stringify({ base: "reference", bootstrap: { draws: 0 }, smoothing: { kind: "average", years: 3, overlapping: true } }));
    const out = path.join(work, "spec.csv");
    await fitInProcess(["--panel", path.join(fixtures, "simulated-12x30.csv"), "--spec", good, "--out", out]);
    expect(readCsv(out)[0].spec).toBe("reference+file");
    const bad = path.join(work, "bad-spec.json");
    writeFileSync(bad, JSON.stringify({ base: "reference", level: 2 }));
    await expect(fitInProcess(["--panel", path.join(fixtures, "simulated-12x30.csv"), "--spec", bad, "--out", out])).rejects.toThrow(
      `Invalid spec file ${bad}: kpfSpec: level must be in (0, 1), got 2.`,
    );
    const unknownField = path.join(work, "unknown-spec.json");
    writeFileSync(unknownField, JSON.stringify({ bootstrap: { drawz: 10 } }));
    await expect(fitInProcess(["--panel", path.join(fixtures, "simulated-12x30.csv"), "--spec", unknownField, "--out", out])).rejects.toThrow(
      /^Invalid spec file .*unknown-spec\.json: bootstrap: Unrecognized key/,
    );
    await expect(fitInProcess(["--panel", path.join(fixtures, "simulated-12x30.csv"), "--spec", "refrence", "--out", out])).rejects.toThrow(
      '--spec "refrence" is neither a named spec (reference, reference-panel, team-default) nor a .json file.',
    );
  });

  it("stops with one sentence naming file, row and column for bad input", async () => {
    const out = path.join(work, "bad.csv");
    const file = path.join(fixtures, "bad-non-numeric.csv");
    await expect(fitInProcess(["--panel", file, "--out", out])).rejects.toThrow(
      `${file}, row 4, column "researchers": "abc" is not a number (leave the cell empty or write NA for a missing value).`,
    );
    await expect(fitInProcess(["--panel", path.join(work, "nope.csv"), "--out", out])).rejects.toThrow(/^Cannot read the panel file .*nope\.csv: no such file\.$/);
  });
});

// The compiled command line as a separate process: built by the project's own build script
// (scripts/build-cli.mjs -> dist/cli.mjs, what `npm install` does) and run as bin/ideafront.mjs;
// skipped with a reason when the build fails (e.g. another command does not compile yet).
const entry = path.join(root, "bin/ideafront.mjs");
let compiled: string | null = null;
const built = spawnSync(process.execPath, [path.join(root, "scripts/build-cli.mjs")], { encoding: "utf8", timeout: 120_000 });
if (built.status === 0) compiled = entry;
else console.warn(`SKIP compiled command-line tests: node scripts/build-cli.mjs failed (${(built.stderr || built.stdout).split("\n").find((l) => l.trim()) ?? built.status})`);

function cli(args: string[]) {
  const result = spawnSync(process.execPath, [compiled as string, ...args], { encoding: "utf8", env: { ...process.env, IDEAFRONT_QUIET: "1" }, timeout: 60_000 });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

describe.skipIf(compiled === null)("the compiled command line", () => {
  it("shows help for fit and tfp with exit code 0", () => {
    const fit = cli(["fit", "--help"]);
    expect(fit.status).toBe(0);
    expect(fit.stdout).toContain("--panel <file>");
    expect(fit.stdout).toContain("--spec <name|file>");
    const tfp = cli(["tfp", "--help"]);
    expect(tfp.status).toBe(0);
    expect(tfp.stdout).toContain("--accounts <file>");
  });

  it("exits with code 2 and one sentence for bad input and bad usage", () => {
    const file = path.join(fixtures, "bad-duplicate.csv");
    const bad = cli(["fit", "--panel", file, "--out", path.join(work, "x.csv")]);
    expect(bad.status).toBe(2);
    expect(bad.stderr.trim()).toBe(`${file}, row 4: economy XAA, year 2001 already appears in row 3 (duplicate economy-year).`);
    const missing = cli(["fit", "--panel", path.join(fixtures, "bad-missing-column.csv"), "--out", path.join(work, "x.csv")]);
    expect(missing.status).toBe(2);
    expect(missing.stderr).toMatch(/row 1: missing column "tfp"/);
    const usage = cli(["fit", "--panel", file]);
    expect(usage.status).toBe(2);
    expect(usage.stderr).toMatch(/required option '--out <file>' not specified/);
    const draws = cli(["fit", "--panel", file, "--out", "x.csv", "--draws", "many"]);
    expect(draws.status).toBe(2);
    expect(draws.stderr).toMatch(/option '--draws <n>' argument 'many' is invalid\. must be a non-negative integer\./);
  });

  it("writes the same results as the in-process run, with the summary on stderr", async () => {
    const a = path.join(work, "proc-a.csv");
    const b = path.join(work, "proc-b.csv");
    const panel = path.join(fixtures, "simulated-12x30.csv");
    const run = spawnSync(process.execPath, [compiled as string, "fit", "--panel", panel, "--spec", "reference", "--draws", "199", "--out", a], { encoding: "utf8", env: { ...process.env, IDEAFRONT_QUIET: "0" } });
    expect(run.status).toBe(0);
    expect(run.stderr).toMatch(/^Fitted \d+ of 12 economies with spec reference \(single-economy diagnostics\) in [\d.]+ s/);
    await fitInProcess(["--panel", panel, "--spec", "reference", "--draws", "199", "--out", b]);
    expect(readFileSync(a, "utf8")).toBe(readFileSync(b, "utf8"));
  });
});
