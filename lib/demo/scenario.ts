/**
 * The invented demo scenario: fictional economies simulated from the knowledge production
 * function with the parameters in parameters.json, measured with noise and published in quarterly
 * vintages. Pure and deterministic: the same parameters give the same releases on every machine.
 *
 * What the vintages show (by design): recent years revised at every release, a year added at some
 * releases, a new economy appearing, the TFP index rebased once (a unit change), and one
 * researcher series broken by a change of survey method.
 */
import { createHash } from "node:crypto";
import { csvFormat } from "d3-dsv";
import { createRng } from "../estimation/random";
import params from "./parameters.json" with { type: "json" };

export const DEMO_SOURCE = "demo-statistics-office";
export const DEMO_NOTICE = "Invented demo data: fictional economies and simulated numbers, for trying the tool only.";

export interface DemoEconomy {
  code: string;
  name: string;
  population1981: number;
  popGrowth: [number, number];
  researchersPerMillion: [number, number];
  researchersFrom: number;
  g0: number;
  firstVintage?: number;
}

export interface DemoVintage {
  label: string;
  lastYear: number;
  tfpRebase?: { from: string; to: string };
  researcherBreak?: { economy: string; beforeYear: number; factor: number; note: string };
}

export const demoParameters = params as unknown as {
  about: string;
  seed: number;
  firstYear: number;
  truth: { gamma: number; theta: number };
  measurement: { tfpCycleSd: number; tfpCycleRho: number; researcherNoiseSd: number; populationNoiseSd: number; revisionSdByAge: number[] };
  economies: DemoEconomy[];
  vintages: DemoVintage[];
};

/** One row of a demo release in SDMX-CSV 1.0 terms. */
export interface DemoRow {
  REF_AREA: string;
  MEASURE: "RES_FTE" | "POP" | "TFP";
  UNIT_MEASURE: string;
  TIME_PERIOD: string;
  OBS_VALUE: number;
  OBS_STATUS: "A" | "P" | "B";
}

/** Stable 32-bit seed from labels, so each random stream is independent of generation order. */
function seedOf(...parts: (string | number)[]): number {
  return createHash("sha256").update(`${demoParameters.seed}|${parts.join("|")}`).digest().readInt32LE(0);
}

interface TruePaths {
  years: number[];
  population: number[]; // persons
  researchers: number[]; // FTE
  tfp: number[]; // true level, 1 in the first year
  tfpMeasured: number[]; // level with the business-cycle component
  researchersMeasured: number[];
  populationMeasured: number[];
}

const LAST_SIMULATED_YEAR = 2025;

/** The simulated "final" values of one economy (before vintage-specific revisions). */
export function truePaths(e: DemoEconomy): TruePaths {
  const { gamma, theta } = demoParameters.truth;
  const m = demoParameters.measurement;
  const rng = createRng(seedOf("truth", e.code));
  const years: number[] = [];
  for (let y = demoParameters.firstYear; y <= LAST_SIMULATED_YEAR; y++) years.push(y);
  const T = years.length;
  const population: number[] = [];
  const researchers: number[] = [];
  let pop = e.population1981 * 1e6;
  for (let i = 0; i < T; i++) {
    const w = i / (T - 1);
    if (i > 0) pop *= 1 + e.popGrowth[0] + (e.popGrowth[1] - e.popGrowth[0]) * w;
    population.push(pop);
    // Researchers per million rise at a constant rate between the two stated levels.
    const share = e.researchersPerMillion[0] * Math.pow(e.researchersPerMillion[1] / e.researchersPerMillion[0], w);
    researchers.push((share * pop) / 1e6);
  }
  // Knowledge production: A_t = A_{t-1} (1 + B R_{t-1}^gamma A_{t-1}^(theta-1)), B set so g = g0 in 1981.
  const B = e.g0 / Math.pow(researchers[0]!, gamma);
  const tfp: number[] = [1];
  for (let i = 1; i < T; i++) {
    const a = tfp[i - 1]!;
    tfp.push(a * (1 + B * Math.pow(researchers[i - 1]!, gamma) * Math.pow(a, theta - 1)));
  }
  let cycle = 0;
  const tfpMeasured = tfp.map((a) => {
    cycle = m.tfpCycleRho * cycle + m.tfpCycleSd * Math.sqrt(1 - m.tfpCycleRho ** 2) * rng.nextNormal();
    return a * Math.exp(cycle);
  });
  const researchersMeasured = researchers.map((r) => r * Math.exp(m.researcherNoiseSd * rng.nextNormal()));
  const populationMeasured = population.map((p) => p * Math.exp(m.populationNoiseSd * rng.nextNormal()));
  return { years, population, researchers, tfp, tfpMeasured, researchersMeasured, populationMeasured };
}

/** Rows of demo vintage `index` (0-based), exactly as the demo statistics office publishes them. */
export function demoReleaseRows(index: number): DemoRow[] {
  const vintages = demoParameters.vintages;
  if (!Number.isInteger(index) || index < 0 || index >= vintages.length) {
    throw new RangeError(`demo vintage index ${index} is outside 0..${vintages.length - 1}`);
  }
  const v = vintages[index]!;
  const rebased = vintages.slice(0, index + 1).some((x) => x.tfpRebase);
  const tfpUnit = rebased ? vintages.find((x) => x.tfpRebase)!.tfpRebase!.to : (vintages.find((x) => x.tfpRebase)?.tfpRebase?.from ?? "index, 2015=100");
  const baseYear = Number(/(\d{4})=100/.exec(tfpUnit)![1]);
  const breaks = vintages.slice(0, index + 1).flatMap((x) => (x.researcherBreak ? [x.researcherBreak] : []));
  const sdByAge = demoParameters.measurement.revisionSdByAge;
  const rows: DemoRow[] = [];
  for (const e of demoParameters.economies) {
    if ((e.firstVintage ?? 1) > index + 1) continue;
    const p = truePaths(e);
    const rng = createRng(seedOf("revision", v.label, e.code));
    const revise = (value: number, year: number) => {
      const age = v.lastYear - year;
      return age < sdByAge.length ? value * (1 + sdByAge[age]! * rng.nextNormal()) : value;
    };
    const lastIdx = p.years.indexOf(v.lastYear);
    const tfpRevised = p.tfpMeasured.slice(0, lastIdx + 1).map((a, i) => revise(a, p.years[i]!));
    const base = tfpRevised[p.years.indexOf(baseYear)]!;
    for (let i = 0; i <= lastIdx; i++) {
      const year = p.years[i]!;
      const status = year === v.lastYear ? "P" : "A";
      rows.push({ REF_AREA: e.code, MEASURE: "POP", UNIT_MEASURE: "persons", TIME_PERIOD: String(year), OBS_VALUE: round(revise(p.populationMeasured[i]!, year), 0), OBS_STATUS: status });
      rows.push({ REF_AREA: e.code, MEASURE: "TFP", UNIT_MEASURE: tfpUnit, TIME_PERIOD: String(year), OBS_VALUE: round((100 * tfpRevised[i]!) / base, 4), OBS_STATUS: status });
      if (year >= e.researchersFrom) {
        let r = revise(p.researchersMeasured[i]!, year);
        const brk = breaks.find((b) => b.economy === e.code);
        let s: DemoRow["OBS_STATUS"] = status;
        if (brk && year < brk.beforeYear) r *= brk.factor;
        if (brk && year === brk.beforeYear) s = "B";
        rows.push({ REF_AREA: e.code, MEASURE: "RES_FTE", UNIT_MEASURE: "full-time equivalent", TIME_PERIOD: String(year), OBS_VALUE: round(r, 0), OBS_STATUS: s });
      }
    }
  }
  return rows;
}

function round(x: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
}

/** Demo vintage `index` as an SDMX-CSV 1.0 file (the format the demo statistics office serves). */
export function demoReleaseSdmxCsv(index: number): string {
  const rows = demoReleaseRows(index);
  return `${csvFormat(
    rows.map((r) => ({ DATAFLOW: "IDEAFRONT_DEMO:DF_KPF(1.0)", ...r })),
    ["DATAFLOW", "REF_AREA", "MEASURE", "UNIT_MEASURE", "TIME_PERIOD", "OBS_VALUE", "OBS_STATUS"],
  )}\n`;
}

/** Number of demo vintages. */
export const DEMO_VINTAGE_COUNT = demoParameters.vintages.length;

/** The true long-run growth of each demo economy under the stated parameters (n = last-10-year researcher growth). */
export function demoTrueLongRunGrowth(e: DemoEconomy): number {
  const p = truePaths(e);
  const T = p.years.length;
  const n = Math.log(p.researchers[T - 1]! / p.researchers[T - 11]!) / 10;
  const { gamma, theta } = demoParameters.truth;
  return (gamma * n) / (1 - theta);
}
