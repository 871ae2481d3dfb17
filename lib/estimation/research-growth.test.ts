import { existsSync, readFileSync } from "node:fs";
import path from "node:path";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { researchGrowth, researchersFromPerMillion } from "./research-growth";

const dataDir = path.resolve(import.meta.dirname, "../../../shared/data");
const perMillionFile = path.join(dataDir, "wdi", "sp.pop.scie.rd.p6", "2026-04-01.csv");
const populationFile = path.join(dataDir, "wdi", "sp.pop.totl", "2026-04-01.csv");
const oecdFile = path.join(dataDir, "oecd-legacy", "oecd_global_researchers.csv");
const pwtFile = path.join(dataDir, "pwt", "pwt10.01-growth-subset.csv");
const hasData = [perMillionFile, populationFile, oecdFile, pwtFile].every((f) => existsSync(f));
if (!hasData) console.warn(`SKIP research-growth real-data tests: reference data not found under ${dataDir} (WDI, OECD legacy, PWT files)`);

type Series = Map<string, Map<number, number>>;

/** Reads economy x year -> value from a CSV with the given column names. */
function readSeries(file: string, code: string, year: string, value: string, keep: (r: Record<string, string>) => boolean = () => true): Series {
  const records = parse(readFileSync(file, "utf8"), { columns: true, bom: true, skip_empty_lines: true }) as Record<string, string>[];
  const series: Series = new Map();
  for (const r of records) {
    if (r[value] === "" || !keep(r)) continue;
    const byYear = series.get(r[code]) ?? new Map<number, number>();
    byYear.set(Number(r[year]), Number(r[value]));
    series.set(r[code], byYear);
  }
  return series;
}

/** Annual arrays from the first to the last year with researcher data (null where absent). */
function annual(perMillion: Map<number, number>, population: Map<number, number> | undefined) {
  const known = [...perMillion.keys()];
  const from = Math.min(...known);
  const to = Math.max(...known);
  const years = Array.from({ length: to - from + 1 }, (_, i) => from + i);
  const rate = years.map((y) => perMillion.get(y) ?? null);
  const people = years.map((y) => population?.get(y) ?? null);
  return { years, rate, people, fte: researchersFromPerMillion(rate, people) };
}

describe.skipIf(!hasData)("research-labour growth on World Bank WDI (vintage 2026-04-01)", () => {
  const perMillion = hasData ? readSeries(perMillionFile, "Country Code", "Year", "Value") : new Map();
  const population = hasData ? readSeries(populationFile, "Country Code", "Year", "Value") : new Map();

  it("equals the mean of the last 10 annual log changes wherever the window is complete", () => {
    let checked = 0;
    for (const [code, byYear] of perMillion) {
      const { years, fte } = annual(byYear, population.get(code));
      const last = fte.length - 1;
      const window = fte.slice(last - 10, last + 1);
      if (last < 10 || window.some((v) => v === null)) continue;
      const result = researchGrowth(years, fte);
      let sum = 0;
      for (let k = 1; k <= 10; k++) sum += Math.log((window[k] as number) / (window[k - 1] as number));
      // identity of the reference definition (telescoping sum), WDI SP.POP.SCIE.RD.P6 x SP.POP.TOTL, tol 1e-12
      expect(Math.abs((result.n as number) - sum / 10), code).toBeLessThan(1e-12);
      expect(result).toMatchObject({ t0: years[last] - 10, t1: years[last], warnings: [] });
      checked++;
    }
    console.log(`WDI 2026-04-01: endpoint n checked against the mean of 10 annual log changes for ${checked} economies and aggregates`);
    expect(checked).toBeGreaterThan(50); // 75 series have 11 complete years in this vintage (counted in shared/data)
  });

  it("uses the earliest year in the window when data are sparse (Angola: 2011 and 2016 only)", () => {
    const { years, fte } = annual(perMillion.get("AGO") as Map<number, number>, population.get("AGO"));
    const result = researchGrowth(years, fte);
    expect(result).toMatchObject({ t0: 2011, t1: 2016, yearsUsed: [2011, 2016] });
    const r2011 = fte[0] as number;
    const r2016 = fte[5] as number;
    expect(Math.abs((result.n as number) - Math.log(r2016 / r2011) / 5)).toBeLessThan(1e-15); // WDI AGO 2011, 2016; definition, tol 1e-15
    expect(result.warnings).toContain("the window 2006-2016 has data from 2011 only: n spans 5 of 10 years");
    const trend = researchGrowth(years, fte, { method: "log-trend" });
    expect(Math.abs((trend.n as number) - (result.n as number))).toBeLessThan(1e-15); // two points: same line, tol 1e-15
    expect(trend.warnings).toContain("log-trend from 2 points equals the endpoint rate");
  });

  it("splits researcher growth into per-million growth plus population growth, and fits a log trend (USA)", () => {
    const { years, rate, people, fte } = annual(perMillion.get("USA") as Map<number, number>, population.get("USA"));
    const total = researchGrowth(years, fte).n as number;
    const intensity = researchGrowth(years, rate).n as number;
    const pop = researchGrowth(years, people).n as number;
    expect(Math.abs(total - (intensity + pop))).toBeLessThan(1e-14); // ln(a b) = ln a + ln b, WDI USA, tol 1e-14
    const trend = researchGrowth(years, fte, { method: "log-trend" });
    expect(trend.yearsUsed).toEqual(years.filter((y) => y >= years[years.length - 1] - 10));
    // Slope from the uncentred normal equations, computed independently here, tol 1e-10
    const xs = trend.yearsUsed.map((y) => y - 2000);
    const ys = trend.yearsUsed.map((y) => Math.log(fte[years.indexOf(y)] as number));
    const m = xs.length;
    const sx = xs.reduce((s, x) => s + x, 0);
    const sy = ys.reduce((s, y) => s + y, 0);
    const sxy = xs.reduce((s, x, i) => s + x * ys[i], 0);
    const sxx = xs.reduce((s, x) => s + x * x, 0);
    expect(Math.abs((trend.n as number) - (m * sxy - sx * sy) / (m * sxx - sx * sx))).toBeLessThan(1e-10);
  });

  it("gives null n with a warning when only one year has data", () => {
    const single = [...perMillion.entries()].find(([, byYear]) => byYear.size === 1);
    expect(single, "WDI 2026-04-01 has economies with a single researcher figure").toBeDefined();
    const [code, byYear] = single as [string, Map<number, number>];
    const { years, fte } = annual(byYear, population.get(code));
    const result = researchGrowth(years, fte);
    expect(result.n).toBeNull();
    expect(result.warnings[0]).toMatch(/only one year with researcher data/);
  });

  it("turns per-million figures into counts that agree with OECD researchers per 1000 employed x PWT employment", () => {
    const oecd = readSeries(oecdFile, "LOCATION", "TIME", "Value", (r) => r.MEASURE === "1000EMPLOYED" && r.SUBJECT === "TOT");
    const employment = readSeries(pwtFile, "isocode", "year", "emp"); // millions of persons engaged
    const logRatios: number[] = [];
    for (const [code, byYear] of oecd) {
      for (const [year, perThousandEmployed] of byYear) {
        const rate = perMillion.get(code)?.get(year);
        const people = population.get(code)?.get(year);
        const employed = employment.get(code)?.get(year);
        if (rate === undefined || people === undefined || employed === undefined) continue;
        const [count] = researchersFromPerMillion([rate], [people]);
        logRatios.push(Math.log((count as number) / ((perThousandEmployed / 1000) * employed * 1e6)));
      }
    }
    logRatios.sort((x, y) => x - y);
    const median = logRatios[logRatios.length >> 1];
    console.log(`WDI counts vs OECD MSTI x PWT emp: ${logRatios.length} country-years, median log ratio ${median.toFixed(4)}`);
    expect(logRatios.length).toBeGreaterThan(500);
    // Cross-source: WDI SP.POP.SCIE.RD.P6 x SP.POP.TOTL (2026-04-01) vs OECD MSTI legacy (Oct 2020) x PWT 10.01 emp,
    // computed on shared/data; two sources of the same UNESCO/OECD FTE counts: median within 5%, all within a factor 1.5 (worst: ZAF 1997, 0.70).
    expect(Math.abs(median)).toBeLessThan(0.05);
    expect(Math.max(...logRatios.map(Math.abs))).toBeLessThan(Math.log(1.5));
  });
});

describe("researchGrowth and researchersFromPerMillion: misuse", () => {
  it("throws with specific messages", () => {
    expect(() => researchGrowth([2000, 2001], [1])).toThrow(new RangeError("researchGrowth: years has 2 entries but researchers has 1"));
    expect(() => researchGrowth([2001, 2000], [1, 2])).toThrow(/years must increase strictly, but years\[1\] = 2000 follows 2001/);
    expect(() => researchGrowth([2000, 2001], [1, -2])).toThrow(/researchers in 2001 is -2; it cannot be negative/);
    expect(() => researchGrowth([2000, 2001], [1, Number.NaN])).toThrow(/researchers in 2001 is NaN; use null for a missing value/);
    expect(() => researchGrowth([2000, 2001], [1, 2], { window: 0 })).toThrow(/window must be a positive integer, got 0/);
    expect(() => researchersFromPerMillion([1, 2], [3])).toThrow(/perMillion has 2 entries but population has 1/);
  });

  it("skips a published zero with a warning and reports an old latest figure", () => {
    const years = [2000, 2001, 2002, 2003];
    const values = [0, 100, 110, null];
    const frozen = [...values];
    const result = researchGrowth(years, values);
    expect(result).toMatchObject({ t0: 2001, t1: 2002 });
    expect(result.warnings).toEqual([
      "researchers in 2000 is 0: left out (its log is undefined)",
      "the latest researcher figure is for 2002, 1 year(s) before the end of the series",
      "the window 1992-2002 has data from 2001 only: n spans 1 of 10 years",
    ]);
    expect(values).toEqual(frozen);
  });
});
