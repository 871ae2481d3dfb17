/**
 * Writes a SIMULATED panel CSV (economy,year,researchers,tfp,population) from the knowledge
 * production function with known parameters (lib/estimation/kpf-simulate.ts). Fictional economies
 * XAA, XAB, ...; nothing here is real data.
 *
 * Run: npx tsx bench/synthetic-panel.ts [--economies 200] [--years 45] [--gamma 0.8] [--theta 0.3]
 *        [--sigma-a 0.005] [--seed 7] [--missing 0.01] --out bench/out/panel-200x45.csv
 * --sigma-a adds noise to ln A so that some annual changes are non-positive, as in real data;
 * --missing blanks that share of researcher and TFP cells at random (never the first year).
 */
import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { parseArgs } from "node:util";
import { pathToFileURL } from "node:url";
import { simulateKpfPanel } from "../lib/estimation/kpf-simulate";
import { type Rng, createRng } from "../lib/estimation/random";

export interface SyntheticPanelCsvOptions {
  economies: number;
  years: number;
  gamma: number;
  theta: number;
  sigmaA: number;
  missing: number;
  seed: number;
}

/**
 * The CSV text of a SIMULATED panel (kpf-simulate.ts), with cells blanked at random, and the truth
 * behind it. Example: syntheticPanelCsv({ economies: 2, years: 3, ... }).csv starts
 * "economy,year,researchers,tfp,population". Reference: DOMAIN.md section 2 (the model simulated).
 */
export function syntheticPanelCsv(options: SyntheticPanelCsvOptions): { csv: string; truth: ReturnType<typeof simulateKpfPanel>["truth"] } {
  const rng: Rng = createRng(options.seed);
  const sim = simulateKpfPanel(
    { economies: options.economies, years: options.years, gamma: options.gamma, theta: options.theta, sigmaA: options.sigmaA, firstYear: 1975 },
    rng,
  );
  const blanks = rng.jumped();
  const lines = ["economy,year,researchers,tfp,population"];
  for (const s of sim.panel) {
    s.years.forEach((year, i) => {
      const r = i > 0 && blanks.nextFloat64() < options.missing ? "" : (s.researchers[i] as number).toPrecision(10);
      const a = i > 0 && blanks.nextFloat64() < options.missing ? "" : (s.tfp[i] as number).toPrecision(12);
      lines.push(`${s.economy},${year},${r},${a},${s.population![i]}`);
    });
  }
  return { csv: `${lines.join("\n")}\n`, truth: sim.truth };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? "").href) {
  const { values } = parseArgs({
    options: {
      economies: { type: "string", default: "200" },
      years: { type: "string", default: "45" },
      gamma: { type: "string", default: "0.8" },
      theta: { type: "string", default: "0.3" },
      "sigma-a": { type: "string", default: "0.005" },
      missing: { type: "string", default: "0.01" },
      seed: { type: "string", default: "7" },
      out: { type: "string" },
    },
  });
  if (!values.out) {
    console.error("give --out FILE.csv");
    process.exit(2);
  }
  const { csv } = syntheticPanelCsv({
    economies: Number(values.economies),
    years: Number(values.years),
    gamma: Number(values.gamma),
    theta: Number(values.theta),
    sigmaA: Number(values["sigma-a"]),
    missing: Number(values.missing),
    seed: Number(values.seed),
  });
  mkdirSync(path.dirname(values.out), { recursive: true });
  writeFileSync(values.out, csv);
  console.log(`wrote ${values.out}: SIMULATED panel, ${values.economies} fictional economies x ${values.years} years`);
}
