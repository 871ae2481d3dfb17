/**
 * Benchmark: moving-block bootstrap of small OLS problems, the size of a per-economy knowledge
 * production fit: 200 economies x 999 draws x 40 rows x 3 columns (intercept, ln R_{t-1}, ln A_{t-1}).
 * Prints the median wall time of 5 runs (target: well under 0.3 s), plus, for scale, the time of the
 * general path (index generation + QR `ols` refit per draw) on one economy.
 *
 * Run: npx tsx bench/ols-bootstrap.ts
 */
import { performance } from "node:perf_hooks";
import { bootstrapOls, createRng, matrixFromColumns, movingBlockIndices, ols, selectRows, type Matrix } from "../lib/estimation";

const ECONOMIES = 200;
const DRAWS = 999;
const ROWS = 40;
const RUNS = 5;

// Invented data (no real economy): ln R trending up, ln A a slow random walk, y = ln g with noise.
const data = createRng(20240611);
const problems: { design: Matrix; y: Float64Array }[] = [];
for (let e = 0; e < ECONOMIES; e++) {
  const ones = new Float64Array(ROWS).fill(1);
  const lnR = new Float64Array(ROWS);
  const lnA = new Float64Array(ROWS);
  const y = new Float64Array(ROWS);
  let r = 9 + 3 * data.nextFloat64();
  let a = 0.2 * data.nextNormal();
  for (let t = 0; t < ROWS; t++) {
    r += 0.03 + 0.02 * data.nextNormal();
    a += 0.015 + 0.01 * data.nextNormal();
    lnR[t] = r;
    lnA[t] = a;
    y[t] = -9 + 0.5 * r - 0.6 * a + 0.4 * data.nextNormal();
  }
  problems.push({ design: matrixFromColumns([ones, lnR, lnA]), y });
}

function runFastPath(seed: number): number {
  const rng = createRng(seed);
  let checksum = 0;
  for (const { design, y } of problems) {
    const result = bootstrapOls(design, y, { draws: DRAWS, rng });
    checksum += result.coefficients[result.coefficients.length - 1];
  }
  return checksum;
}

const median = (values: number[]): number => {
  const s = [...values].sort((p, q) => p - q);
  return s[Math.floor(s.length / 2)];
};

runFastPath(1); // warm-up (JIT)
const times: number[] = [];
const cpuTimes: number[] = [];
let checksum = 0;
for (let run = 0; run < RUNS; run++) {
  const cpu0 = process.cpuUsage();
  const t0 = performance.now();
  checksum += runFastPath(100 + run);
  times.push(performance.now() - t0);
  const cpu = process.cpuUsage(cpu0);
  cpuTimes.push((cpu.user + cpu.system) / 1000);
}
console.log(
  `bootstrapOls: ${ECONOMIES} economies x ${DRAWS} draws x ${ROWS} rows x 3 columns: ` +
    `median of ${RUNS} runs ${(median(times) / 1000).toFixed(3)} s wall, ${(median(cpuTimes) / 1000).toFixed(3)} s CPU ` +
    `(wall runs: ${times.map((t) => (t / 1000).toFixed(3)).join(", ")} s; checksum ${checksum.toFixed(6)})`,
);
// Wall time depends on what else the machine runs; CPU time of this process is steadier.

// For scale: the general path on ONE economy (allocates a resampled design and a QR per draw).
const general: number[] = [];
for (let run = 0; run < RUNS; run++) {
  const rng = createRng(7 + run);
  const indices = new Int32Array(ROWS);
  const { design, y } = problems[0];
  const t0 = performance.now();
  for (let d = 0; d < DRAWS; d++) {
    movingBlockIndices(ROWS, rng, {}, indices);
    const ys = new Float64Array(ROWS);
    for (let i = 0; i < ROWS; i++) ys[i] = y[indices[i]];
    ols(selectRows(design, indices), ys, { refinementSteps: 0 });
  }
  general.push(performance.now() - t0);
}
console.log(
  `general path (movingBlockIndices + ols per draw), 1 economy x ${DRAWS} draws: median ${(median(general) / 1000).toFixed(3)} s ` +
    `(x ${ECONOMIES} economies would be about ${((median(general) * ECONOMIES) / 1000).toFixed(1)} s)`,
);
