/**
 * Monte Carlo check of the knowledge production function estimators on SIMULATED panels with known
 * gamma, theta and n (lib/estimation/kpf-simulate.ts; fictional economies, not data).
 *
 * For each design, 500 seeded replications: simulate, fit, bootstrap (999 draws), and record
 *  - recovery: mean error and root mean squared error of gamma and theta;
 *  - coverage of the TRUE g* = gamma n/(1 - theta) (n the true drift of research labour) by the 95%
 *    bootstrap-percentile interval and by the 95% delta-method interval, for the first economy of
 *    each replication (500 independent intervals; target 92-98% for the pooled designs) and over all
 *    economies (correlated within a replication);
 *  - coverage of the true theta by its 95% interval.
 * n is estimated from the last 10 years of researchers in every replication and its sampling error
 * enters the intervals (spec nUncertainty "window": Student t draws).
 *
 * Designs:
 *  A. restricted panel (the reference-panel spec at 95%): 20 economies x 45 years, gamma = 1 fixed,
 *     theta = -1, clustered by economy, whole economies resampled;
 *  B. unrestricted panel: 20 economies x 45 years, gamma = 0.5, theta = 0.4;
 *  C. one economy, 45 years (the reference spec at 95%): gamma = 0.5, theta = 0.4 - a diagnostic.
 *
 * Run: npx tsx bench/monte-carlo.ts [--replications 500] [--draws 999]
 */
import { parseArgs } from "node:util";
import { performance } from "node:perf_hooks";
import { impliedGrowth } from "../lib/estimation/implied-growth";
import { kpfCovariance } from "../lib/estimation/kpf-covariance";
import { fitKpf } from "../lib/estimation/kpf-fit";
import { simulateKpfPanel } from "../lib/estimation/kpf-simulate";
import { type KpfSpec, REFERENCE_PANEL_SPEC, REFERENCE_SPEC, deriveKpfSpec, kpfSpec } from "../lib/estimation/kpf-spec";
import { createRng } from "../lib/estimation/random";

const { values } = parseArgs({ options: { replications: { type: "string", default: "500" }, draws: { type: "string", default: "999" } } });
const replications = Number(values.replications);
const draws = Number(values.draws);

interface Design {
  name: string;
  economies: number;
  years: number;
  gamma: number;
  theta: number;
  spec: KpfSpec;
}

const designs: Design[] = [
  { name: "A. restricted panel, gamma = 1 fixed", economies: 20, years: 45, gamma: 1, theta: -1, spec: deriveKpfSpec(REFERENCE_PANEL_SPEC, { level: 0.95 }) },
  { name: "B. unrestricted panel", economies: 20, years: 45, gamma: 0.5, theta: 0.4, spec: kpfSpec({ scope: "panel", covariance: { kind: "cluster" }, level: 0.95 }) },
  { name: "C. one economy (diagnostic)", economies: 1, years: 45, gamma: 0.5, theta: 0.4, spec: deriveKpfSpec(REFERENCE_SPEC, { level: 0.95 }) },
];

const pct = (x: number): string => `${(100 * x).toFixed(1)}%`;

for (const design of designs) {
  const started = performance.now();
  let coveredFirst = 0;
  let coveredFirstDelta = 0;
  let coveredAll = 0;
  let coveredAllDelta = 0;
  let intervalsAll = 0;
  let coveredTheta = 0;
  let estimated = 0;
  const gammaErrors: number[] = [];
  const thetaErrors: number[] = [];
  for (let r = 0; r < replications; r++) {
    const sim = simulateKpfPanel(
      { economies: design.economies, years: design.years, gamma: design.gamma, theta: design.theta, nRange: [0.02, 0.04], g0Range: [0.005, 0.03] },
      createRng(100_000 + r),
    );
    const fit = fitKpf(design.economies === 1 ? sim.panel[0] : sim.panel, design.spec);
    if (!fit.estimated) continue;
    estimated++;
    const cov = kpfCovariance(fit);
    const implied = impliedGrowth(fit, cov, { draws, rng: createRng(200_000 + r) });
    gammaErrors.push(fit.parameters.gamma - design.gamma);
    thetaErrors.push(fit.parameters.theta - design.theta);
    implied.economies.forEach((e, i) => {
      const truth = sim.truth.find((t) => t.economy === e.economy)!.gStar;
      const inBoot = e.gStarInterval.lower <= truth && truth <= e.gStarInterval.upper;
      const inDelta = e.gStarDelta.lower <= truth && truth <= e.gStarDelta.upper;
      intervalsAll++;
      if (inBoot) coveredAll++;
      if (inDelta) coveredAllDelta++;
      if (i === 0) {
        if (inBoot) coveredFirst++;
        if (inDelta) coveredFirstDelta++;
        const t = implied.economies[0].regimeParameterInterval;
        if (t.lower <= design.theta && design.theta <= t.upper) coveredTheta++;
      }
    });
  }
  const mean = (x: number[]) => x.reduce((s, v) => s + v, 0) / x.length;
  const rmse = (x: number[]) => Math.sqrt(mean(x.map((v) => v * v)));
  console.log(`${design.name}: ${design.economies} economies x ${design.years} years, gamma ${design.gamma}, theta ${design.theta}; spec ${design.spec.name}`);
  console.log(`  ${estimated} of ${replications} replications estimated, ${draws} bootstrap draws each, ${((performance.now() - started) / 1000).toFixed(1)} s`);
  console.log(`  recovery: gamma mean error ${mean(gammaErrors).toFixed(4)} (RMSE ${rmse(gammaErrors).toFixed(4)}); theta mean error ${mean(thetaErrors).toFixed(4)} (RMSE ${rmse(thetaErrors).toFixed(4)})`);
  console.log(
    `  coverage of the true g* by 95% intervals, first economy (${estimated} intervals): bootstrap percentile ${pct(coveredFirst / estimated)}, delta method ${pct(coveredFirstDelta / estimated)}`,
  );
  if (design.economies > 1) {
    console.log(`  coverage over all economies (${intervalsAll} intervals, correlated within a replication): bootstrap ${pct(coveredAll / intervalsAll)}, delta ${pct(coveredAllDelta / intervalsAll)}`);
  }
  console.log(`  coverage of the true theta by its 95% interval: ${pct(coveredTheta / estimated)}`);
}
