// Facts of the trade (DOMAIN.md section 7), computed through lib/estimation. Every check names its
// tag as in DOMAIN.md ([read], [memory], [computed], [verified]) and its source on the line.
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { halvingTime, longRunGrowth, steadyStateGrowth } from "./dynamics";
import { researchGrowth } from "./research-growth";

describe("Bloom, Jones, Van Reenen & Webb (2020), AER 110(4): ideas getting harder to find", () => {
  // [memory] researcher growth 4.3% a year and beta = 1 - theta = 3.1 with gamma = 1 (Bloom et al. 2020, from memory)
  const params = { gamma: 1, theta: 1 - 3.1, n: 0.043 };

  it("implies g* = 0.043 / 3.1 = 1.39% a year, close to US TFP growth of 1.4% a year since 1950", () => {
    const gStar = steadyStateGrowth(params);
    expect(Math.abs(gStar - 0.043 / 3.1)).toBeLessThan(1e-15); // [computed] DOMAIN.md section 7: g* = 0.043/3.1, tol 1e-15
    expect(Math.abs(gStar - 0.0139)).toBeLessThan(0.00005); // [computed] DOMAIN.md section 7: 1.39%, printed to 0.01 pp, tol 0.005 pp
    expect(Math.abs(gStar - 0.014)).toBeLessThan(0.0005); // [read] CBO Long-Term Budget Outlook 2020: US TFP 1.4%/yr since 1950, tol 0.05 pp
    expect(longRunGrowth(params)).toMatchObject({ regime: "converging", gStar }); // theta = -2.1 < 1: fishing out, converging
  });

  it("reads effective researchers rising about 23-fold since the 1930s as about 4% a year", () => {
    // [read, secondary summaries] of Bloom et al. (2020): 23-fold since the 1930s; taken here as 80 years (1935-2015), an assumption
    const result = researchGrowth([1935, 2015], [1, 23], { window: 80 });
    expect(Math.abs((result.n as number) - Math.log(23) / 80)).toBeLessThan(1e-15); // definition, tol 1e-15
    expect(Math.abs((result.n as number) - 0.04)).toBeLessThan(0.002); // [read, secondary] "about 4% a year", tol 0.2 pp
    expect(result.warnings).toEqual([]);
  });

  it("turns research productivity falling about 5% a year into halving every 13-14 years", () => {
    const continuous = halvingTime(0.05);
    const annual = halvingTime(0.05, { compounding: "annual" });
    expect(Math.abs(continuous - 13.9)).toBeLessThan(0.05); // [read] Bloom et al. (2020): ln 2 / 0.05 = 13.9 years, tol 0.05
    expect(annual).toBeGreaterThanOrEqual(13); // [read] Bloom et al. (2020): "halving every 13 years", annual compounding 13.5
    expect(annual).toBeLessThan(14); // [read] Bloom et al. (2020) via DOMAIN.md section 7: 13-14 years, upper end
  });
});

const oecdFile = path.resolve(import.meta.dirname, "../../../shared/data/oecd-legacy/oecd_global_researchers.csv");
const hasOecd = existsSync(oecdFile);
if (!hasOecd) console.warn(`SKIP OECD researcher-intensity fact: ${oecdFile} not found (reference data lives in ../shared/data)`);

describe.skipIf(!hasOecd)("OECD researchers per thousand employed, 1995-2006", () => {
  it("grows at the same rate in the OECD legacy release (2020) as in the OECD Factbook 2010, though the levels were revised", () => {
    const records = parse(readFileSync(oecdFile, "utf8"), { columns: true, bom: true }) as Record<string, string>[];
    const oecd = records.filter((r) => r.LOCATION === "OECD" && r.SUBJECT === "TOT" && r.MEASURE === "1000EMPLOYED");
    const years = oecd.map((r) => Number(r.TIME));
    const intensity = oecd.map((r) => Number(r.Value));
    const window = researchGrowth(
      years.filter((y) => y >= 1995 && y <= 2006),
      intensity.filter((_, i) => years[i] >= 1995 && years[i] <= 2006),
      { window: 11 },
    );
    expect(window).toMatchObject({ t0: 1995, t1: 2006 });
    const factbook = researchGrowth([1995, 2006], [5.9, 7.6], { window: 11 }); // [read] OECD Factbook 2010: 5.9 (1995), 7.6 (2006)
    // Factbook values are rounded to 0.1: ln growth over 11 years is uncertain by (0.05/5.9 + 0.05/7.6)/11 = 0.137 pp
    const roundingBound = (0.05 / 5.9 + 0.05 / 7.6) / 11;
    console.log(`OECD researchers per 1000 employed, 1995-2006: legacy 2020 release ${(100 * (window.n as number)).toFixed(3)}%/yr, Factbook 2010 ${(100 * (factbook.n as number)).toFixed(3)}%/yr`);
    expect(Math.abs((window.n as number) - (factbook.n as number))).toBeLessThan(roundingBound); // [read] OECD Factbook 2010 vs OECD MSTI legacy CSV (Oct 2020), tol 0.137 pp
    // The level itself differs by more than the rounding: the 2020 release re-published other values (a vintage effect).
    const level2006 = intensity[years.indexOf(2006)];
    expect(Math.abs(level2006 - 7.6)).toBeGreaterThan(0.05); // [read] OECD Factbook 2010: 7.6 vs the 2020 release's value
  });
});
