import { describe, expect, it } from "vitest";
import { parse } from "csv-parse/sync";
import { demoParameters, demoReleaseRows, demoReleaseSdmxCsv, truePaths, DEMO_VINTAGE_COUNT } from "./scenario";

// The demo scenario is invented; these tests check that it has the features it promises and that
// it follows the stated law of motion, not facts about the world.
describe("invented demo scenario", () => {
  it("has 12-20 fictional economies in the ISO 3166-1 user-assigned range and 6-10 vintages", () => {
    expect(demoParameters.economies.length).toBeGreaterThanOrEqual(12);
    expect(demoParameters.economies.length).toBeLessThanOrEqual(20);
    for (const e of demoParameters.economies) expect(e.code).toMatch(/^X[A-Z]{2}$/);
    expect(DEMO_VINTAGE_COUNT).toBeGreaterThanOrEqual(6);
    expect(DEMO_VINTAGE_COUNT).toBeLessThanOrEqual(10);
  });

  it("simulates TFP by the discrete knowledge production function with the stated gamma and theta", () => {
    const e = demoParameters.economies[0]!;
    const p = truePaths(e);
    const { gamma, theta } = demoParameters.truth;
    // A_t - A_{t-1} = B R_{t-1}^gamma A_{t-1}^theta with one B for all t: the implied B is constant.
    const impliedB = p.years.slice(1).map((_, i) => (p.tfp[i + 1]! - p.tfp[i]!) / (Math.pow(p.researchers[i]!, gamma) * Math.pow(p.tfp[i]!, theta)));
    for (const b of impliedB) expect(b / impliedB[0]!).toBeCloseTo(1, 12);
    expect(impliedB[0]! * Math.pow(p.researchers[0]!, gamma)).toBeCloseTo(e.g0, 12); // first-year growth g0
  });

  it("is deterministic", () => {
    expect(demoReleaseSdmxCsv(3)).toBe(demoReleaseSdmxCsv(3));
  });

  it("adds years, revises recent ones, keeps old ones, and adds an economy", () => {
    const v1 = demoReleaseRows(0), v3 = demoReleaseRows(2);
    const key = (r: { REF_AREA: string; MEASURE: string; TIME_PERIOD: string }) => `${r.REF_AREA}|${r.MEASURE}|${r.TIME_PERIOD}`;
    const a = new Map(v1.map((r) => [key(r), r.OBS_VALUE]));
    expect(Math.max(...v1.map((r) => Number(r.TIME_PERIOD)))).toBe(2022);
    expect(Math.max(...v3.map((r) => Number(r.TIME_PERIOD)))).toBe(2023);
    expect(v1.some((r) => r.REF_AREA === "XQU")).toBe(false);
    expect(v3.some((r) => r.REF_AREA === "XQU")).toBe(true);
    const pop2021 = v3.find((r) => r.REF_AREA === "XAL" && r.MEASURE === "POP" && r.TIME_PERIOD === "2021")!;
    expect(pop2021.OBS_VALUE).not.toBe(a.get("XAL|POP|2021")); // revised
    const pop1990 = v3.find((r) => r.REF_AREA === "XAL" && r.MEASURE === "POP" && r.TIME_PERIOD === "1990")!;
    expect(pop1990.OBS_VALUE).toBe(a.get("XAL|POP|1990")); // old years stay
  });

  it("rebases the TFP index once (a unit change) and breaks one researcher series", () => {
    const before = demoReleaseRows(3), after = demoReleaseRows(4);
    const unit = (rows: typeof before) => new Set(rows.filter((r) => r.MEASURE === "TFP").map((r) => r.UNIT_MEASURE));
    expect(unit(before)).toEqual(new Set(["index, 2015=100"]));
    expect(unit(after)).toEqual(new Set(["index, 2020=100"]));
    expect(after.find((r) => r.REF_AREA === "XBE" && r.MEASURE === "TFP" && r.TIME_PERIOD === "2020")!.OBS_VALUE).toBe(100);
    const r6 = demoReleaseRows(5), r7 = demoReleaseRows(6);
    const res = (rows: typeof r6, y: string) => rows.find((r) => r.REF_AREA === "XDR" && r.MEASURE === "RES_FTE" && r.TIME_PERIOD === y)!;
    expect(res(r7, "2000").OBS_VALUE / res(r6, "2000").OBS_VALUE).toBeCloseTo(1.12, 3);
    expect(res(r7, "2010").OBS_STATUS).toBe("B");
  });

  it("serves SDMX-CSV 1.0 with a DATAFLOW column first", () => {
    const rows = parse(demoReleaseSdmxCsv(0), { columns: true }) as Record<string, string>[];
    expect(Object.keys(rows[0]!)).toEqual(["DATAFLOW", "REF_AREA", "MEASURE", "UNIT_MEASURE", "TIME_PERIOD", "OBS_VALUE", "OBS_STATUS"]);
    expect(rows.length).toBe(demoReleaseRows(0).length);
  });
});
