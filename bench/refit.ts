/**
 * Benchmark of `ideafront fit` on a SIMULATED panel of 200 fictional economies x 45 years with the
 * `reference` spec (999 moving-block bootstrap draws per economy). Goal (issue 3): the whole process,
 * start-up included, under 0.5 s on these machines.
 *
 * Prints, each as the median of 5 runs (after one warm-up run for the file cache):
 *  - `node -e 0` (bare Node start-up, for scale) and `node bin/ideafront.mjs --help` (start-up of the
 *    compiled command line: every module it loads before any command runs);
 *  - the whole `node bin/ideafront.mjs fit --panel <200 x 45> --spec reference --out ...` process, and
 *    the time inside fitting reported by the command on stderr;
 *  - the same fit in process with a warm JIT (estimateKpf only);
 *  - a refit after a simulated new vintage that revises 10 economies: only those are refitted
 *    (kpfInputKey), and their results are identical to a full refit.
 * With --split it also builds a code-split variant of the command line into bench/out/cli-split
 * (same esbuild settings as scripts/build-cli.mjs plus splitting) and times it the same way, to show
 * what start-up costs come from modules loaded eagerly.
 *
 * Run: npx tsx bench/refit.ts [--split]
 */
import { spawnSync } from "node:child_process";
import { createRequire } from "node:module";
import { mkdirSync, readFileSync, writeFileSync } from "node:fs";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { readPanelCsv } from "../lib/cli/panel-csv";
import { estimateKpf, kpfInputKey } from "../lib/estimation/kpf-estimate";
import type { KpfEconomySeries } from "../lib/estimation/kpf-sample";
import { REFERENCE_SPEC } from "../lib/estimation/kpf-spec";
import { syntheticPanelCsv } from "./synthetic-panel";

const root = path.resolve(import.meta.dirname, "..");
const outDir = path.join(root, "bench", "out");
const RUNS = 5;
mkdirSync(outDir, { recursive: true });

const median = (values: number[]): number => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];
const seconds = (ms: number): string => (ms / 1000).toFixed(3);

function timeProcess(args: string[], runs = RUNS): { wall: number[]; stderr: string[] } {
  const wall: number[] = [];
  const stderr: string[] = [];
  spawnSync(process.execPath, args, { encoding: "utf8" }); // warm-up (file cache)
  for (let r = 0; r < runs; r++) {
    const t0 = performance.now();
    const result = spawnSync(process.execPath, args, { encoding: "utf8" });
    wall.push(performance.now() - t0);
    if (result.status !== 0) throw new Error(`node ${args.join(" ")} failed (${result.status}): ${result.stderr}`);
    stderr.push(result.stderr);
  }
  return { wall, stderr };
}

/** Seconds inside fitting, as the command reports it: "... in 0.21 s (0.29 s in the command) ...". */
function fittingSeconds(stderr: string): number {
  const m = /in ([\d.]+) s \(([\d.]+) s in the command\)/.exec(stderr);
  return m ? Number(m[1]) * 1000 : Number.NaN;
}

// 1. The simulated panel (some negative annual changes and 1% missing cells, as real data have).
const panelFile = path.join(outDir, "panel-200x45.csv");
const { csv } = syntheticPanelCsv({ economies: 200, years: 45, gamma: 0.8, theta: 0.3, sigmaA: 0.005, missing: 0.01, seed: 7 });
writeFileSync(panelFile, csv);
console.log(`SIMULATED panel: 200 fictional economies x 45 years -> ${path.relative(root, panelFile)}`);

// 2. Compile the command line as `npm install` does.
const build = spawnSync(process.execPath, [path.join(root, "scripts/build-cli.mjs")], { encoding: "utf8" });
if (build.status !== 0) throw new Error(`node scripts/build-cli.mjs failed: ${build.stderr}`);

const bare = timeProcess(["-e", "0"]);
const help = timeProcess([path.join(root, "bin/ideafront.mjs"), "--help"]);
const outFile = path.join(outDir, "refit-reference.csv");
const fitArgs = ["fit", "--panel", panelFile, "--spec", "reference", "--out", outFile];
const fit = timeProcess([path.join(root, "bin/ideafront.mjs"), ...fitArgs]);
console.log(`node -e 0 (bare start-up):                 median ${seconds(median(bare.wall))} s`);
console.log(`node bin/ideafront.mjs --help (start-up):  median ${seconds(median(help.wall))} s`);
console.log(
  `node bin/ideafront.mjs fit (200 x 45, reference, 999 draws): median ${seconds(median(fit.wall))} s wall ` +
    `(runs ${fit.wall.map(seconds).join(", ")}); inside fitting median ${seconds(median(fit.stderr.map(fittingSeconds)))} s`,
);

// 3. In process, warm JIT.
const { panel } = readPanelCsv(csv, panelFile);
estimateKpf(panel, REFERENCE_SPEC); // warm-up
const inProcess: number[] = [];
for (let r = 0; r < RUNS; r++) {
  const t0 = performance.now();
  estimateKpf(panel, REFERENCE_SPEC);
  inProcess.push(performance.now() - t0);
}
console.log(`estimateKpf in process (warm JIT): median ${seconds(median(inProcess))} s (runs ${inProcess.map(seconds).join(", ")})`);

// 4. Refit after a new vintage: 10 economies revised; only they are refitted.
const before = estimateKpf(panel, REFERENCE_SPEC);
const revisedPanel: KpfEconomySeries[] = panel.map((s, i) =>
  i % 20 === 0 ? { ...s, tfp: s.tfp.map((v, t) => (v !== null && t >= s.tfp.length - 5 ? v * 1.002 : v)) } : s,
);
const t0 = performance.now();
const oldKeys = new Map(panel.map((s) => [s.economy, kpfInputKey(s, REFERENCE_SPEC)]));
const changed = revisedPanel.filter((s) => oldKeys.get(s.economy) !== kpfInputKey(s, REFERENCE_SPEC));
const refitted = new Map(estimateKpf(changed, REFERENCE_SPEC).map((r) => [r.economy, r]));
const merged = before.map((r) => refitted.get(r.economy) ?? r);
const incremental = performance.now() - t0;
const full = estimateKpf(revisedPanel, REFERENCE_SPEC);
const identical = JSON.stringify(merged) === JSON.stringify(full);
console.log(
  `refit after a new vintage revising ${changed.length} of ${panel.length} economies: ${seconds(incremental)} s ` +
    `(keys + ${changed.length} fits); identical to a full refit: ${identical ? "yes" : "NO"}`,
);

// 5. Optional: a code-split build of the same command line.
if (process.argv.includes("--split")) {
  const require = createRequire(path.join(root, "package.json"));
  const { build: esbuild } = await import("esbuild");
  const splitDir = path.join(outDir, "cli-split");
  await esbuild({
    entryPoints: { cli: path.join(root, "lib", "cli", "main.ts") },
    outdir: splitDir,
    outExtension: { ".js": ".mjs" },
    bundle: true,
    splitting: true,
    platform: "node",
    target: "node20",
    format: "esm",
    packages: "external",
    tsconfig: path.join(root, "tsconfig.json"),
    logLevel: "warning",
    plugins: [
      {
        name: "bundle-package-json",
        setup(b) {
          b.onResolve({ filter: /\.json$/ }, (args) =>
            args.path.startsWith(".") || args.path.startsWith("@/") || path.isAbsolute(args.path) ? undefined : { path: require.resolve(args.path) },
          );
        },
      },
    ],
    banner: { js: "import { createRequire as __ifCreateRequire } from 'node:module'; const require = __ifCreateRequire(import.meta.url);" },
  });
  const splitCli = path.join(splitDir, "cli.mjs");
  const splitHelp = timeProcess([splitCli, "--help"]);
  const splitFit = timeProcess([splitCli, ...fitArgs.slice(0, -1), path.join(outDir, "refit-split.csv")]);
  const same = readFileSync(path.join(outDir, "refit-split.csv"), "utf8") === readFileSync(outFile, "utf8");
  console.log(`code-split build --help (start-up):        median ${seconds(median(splitHelp.wall))} s`);
  console.log(
    `code-split build fit: median ${seconds(median(splitFit.wall))} s wall (runs ${splitFit.wall.map(seconds).join(", ")}); ` +
      `inside fitting ${seconds(median(splitFit.stderr.map(fittingSeconds)))} s; same output: ${same ? "yes" : "NO"}`,
  );
}
