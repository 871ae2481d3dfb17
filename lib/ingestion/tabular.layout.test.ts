// Plain CSV/TSV with a column mapping: long and wide layouts, missing-value tokens, the mapping text.
import { describe, expect, it } from "vitest";
import { parseColumnMap, parseTabular } from "./tabular";

describe("mapping text", () => {
  it("reads economy=COL,period=COL,value=COL[,status=COL], column names with spaces", () => {
    expect(parseColumnMap("economy=Country Code,period=Year,value=Value,status=Flag Codes")).toEqual({ economy: "Country Code", period: "Year", value: "Value", status: "Flag Codes" });
  });
  it("refuses unknown roles and missing '='", () => {
    expect(() => parseColumnMap("country=X")).toThrow(expect.objectContaining({ code: "OPTIONS_INVALID" }));
    expect(() => parseColumnMap("economy")).toThrow(expect.objectContaining({ code: "OPTIONS_INVALID" }));
  });
});

describe("long layout", () => {
  it("reads TSV, keeps the status column, maps missing tokens to null", async () => {
    // ".." is the World Bank DataBank missing marker, ":" Eurostat's
    const text = "iso\tyear\tv\tflag\nFRA\t2019\t1.5\tE\nFRA\t2020\t..\t\nDEU\t2019\t:\tc\nDEU\t2020\t\t\n";
    const r = await parseTabular(text, { map: { economy: "iso", period: "year", value: "v", status: "flag" } });
    expect(r.observations.map((o) => [o.dimensions.iso, o.period, o.value, o.attributes.flag])).toEqual([
      ["FRA", "2019", 1.5, "E"],
      ["FRA", "2020", null, ""],
      ["DEU", "2019", null, "c"],
      ["DEU", "2020", null, ""],
    ]);
  });

  it("reads a decimal comma when told, with the ';' separator detected from the header", async () => {
    const r = await parseTabular("land;jahr;wert\nDEU;2019;5398,6\n", { map: "economy=land,period=jahr,value=wert", decimal: "," });
    expect(r.observations[0]!.value).toBe(5398.6);
  });

  it("skips a preamble before the header", async () => {
    // World Bank bulk CSV downloads start with four lines before the header
    const text = '"Data Source","World Development Indicators",\n\n"Last Updated Date","2026-04-01",\n\nCountry Code,Year,Value\nFRA,2019,1\n';
    const r = await parseTabular(text, { map: "economy=Country Code,period=Year,value=Value", skipLines: 4, locations: true });
    expect(r.observations).toEqual([{ dimensions: { "Country Code": "FRA" }, period: "2019", value: 1, attributes: {}, location: { line: 6, column: 3, field: "Value" } }]);
  });
});

describe("wide layout", () => {
  it("takes periods from the header (DataBank 'YYYY [YRYYYY]' too) and skips empty cells", async () => {
    const text = "Country Name,Country Code,1960 [YR1960],1961 [YR1961],2019Q1\nFrance,FRA,1.5,..,\nGermany,DEU,,2,3\n";
    const r = await parseTabular(text, { layout: "wide", map: "economy=Country Code", attributes: ["Country Name"] });
    expect(r.observations.map((o) => [o.dimensions["Country Code"], o.period, o.value])).toEqual([
      ["FRA", "1960", 1.5],
      ["FRA", "1961", null],
      ["DEU", "1961", 2],
      ["DEU", "2019-Q1", 3],
    ]);
    expect(r.meta.skips).toEqual({ "empty cell": 2 });
  });

  it("refuses a wide table without period columns", async () => {
    await expect(parseTabular("Country Code,Name\nFRA,France\n", { layout: "wide", map: "economy=Country Code" })).rejects.toMatchObject({ code: "CSV_MISSING_COLUMN", location: { line: 1, field: "periods" } });
  });
});
