// SDMX-CSV rows: separator detection, decimal comma, column roles, line numbers, shared objects.
import { Readable } from "node:stream";
import { describe, expect, it } from "vitest";
import { parseSdmxCsv } from "./sdmx-csv";

const HEAD = "STRUCTURE,STRUCTURE_ID,ACTION,REF_AREA,MEASURE,TIME_PERIOD,OBS_VALUE,OBS_STATUS,UNIT_MULT";

describe("SDMX-CSV separator and decimal mark", () => {
  it("takes the separator from the character after STRUCTURE[x] and reads decimal commas with ';'", async () => {
    // SDMX-CSV field guide: "the separator used in a message can be determined by retrieving the character
    // that follows the fixed first column header term STRUCTURE (which may be extended by a squared bracket term)"
    const text = "STRUCTURE[|];STRUCTURE_ID;ACTION;REF_AREA;TIME_PERIOD;OBS_VALUE\ndataflow;X:Y(1.0);I;FRA;2019;1234,5\n";
    const r = await parseSdmxCsv(text);
    expect(r.observations[0]).toMatchObject({ dimensions: { REF_AREA: "FRA" }, value: 1234.5 });
  });

  it("does not read a decimal comma with the ',' separator unless told to", async () => {
    const text = 'STRUCTURE,STRUCTURE_ID,ACTION,REF_AREA,TIME_PERIOD,OBS_VALUE\ndataflow,X:Y(1.0),I,FRA,2019,"12,5"\n';
    await expect(parseSdmxCsv(text)).rejects.toMatchObject({ code: "CSV_NON_NUMERIC_VALUE", location: { line: 2, column: 6, field: "OBS_VALUE" } });
    expect((await parseSdmxCsv(text, { decimal: "," })).observations[0]!.value).toBe(12.5);
  });

  it("reads tab-separated SDMX-CSV", async () => {
    const r = await parseSdmxCsv("STRUCTURE\tSTRUCTURE_ID\tACTION\tREF_AREA\tTIME_PERIOD\tOBS_VALUE\ndataflow\tX:Y(1.0)\tI\tFRA\t2019-Q2\t3\n");
    expect(r.observations[0]).toMatchObject({ period: "2019-Q2", value: 3 });
  });
});

describe("SDMX-CSV column roles", () => {
  it("treats SDMX cross-domain attribute concepts as attributes by default", async () => {
    const r = await parseSdmxCsv(`${HEAD}\ndataflow,X:Y(1.0),I,FRA,FTE,2019,1.5,E,3\n`);
    expect(r.observations[0]).toEqual({ dimensions: { REF_AREA: "FRA", MEASURE: "FTE" }, period: "2019", value: 1.5, attributes: { OBS_STATUS: "E", UNIT_MULT: "3" }, dataset: "X:Y(1.0)" });
  });

  it("follows the dimensions option: the other columns are attributes", async () => {
    const r = await parseSdmxCsv(`${HEAD}\ndataflow,X:Y(1.0),I,FRA,FTE,2019,1.5,E,3\n`, { dimensions: ["REF_AREA"] });
    expect(r.observations[0]).toMatchObject({ dimensions: { REF_AREA: "FRA" }, attributes: { MEASURE: "FTE", OBS_STATUS: "E", UNIT_MULT: "3" } });
  });

  it("reads NaN as explicitly missing and an empty value as no observation", async () => {
    const r = await parseSdmxCsv(`${HEAD}\ndataflow,X:Y(1.0),I,FRA,FTE,2019,NaN,M,\ndataflow,X:Y(1.0),I,FRA,FTE,2020,,E,\n`);
    expect(r.observations).toEqual([{ dimensions: { REF_AREA: "FRA", MEASURE: "FTE" }, period: "2019", value: null, attributes: { OBS_STATUS: "M" }, dataset: "X:Y(1.0)" }]);
    expect(r.meta.skips).toEqual({ "attribute-only row": 1 });
  });

  it("normalises reporting periods: 2019-M07 and 2019-07 are one period", async () => {
    const text = `${HEAD}\ndataflow,X:Y(1.0),I,FRA,FTE,2019-M07,1,,\ndataflow,X:Y(1.0),I,FRA,FTE,2019-07,2,,\n`;
    const r = await parseSdmxCsv(text, { mode: "collect" });
    expect(r.observations[0]!.period).toBe("2019-07");
    expect(r.issues[0]).toMatchObject({ code: "DUPLICATE_OBSERVATION", location: { line: 3, column: 6, field: "TIME_PERIOD" } });
    expect(r.issues[0]!.message).toContain("already on line 2");
  });
});

describe("SDMX-CSV lines and sharing", () => {
  it("numbers records by the line they start on, across quoted line breaks, empty lines and chunks", async () => {
    const text = `STRUCTURE,STRUCTURE_ID,ACTION,REF_AREA,TIME_PERIOD,OBS_VALUE,COMMENT_OBS\r\ndataflow,X:Y(1.0),I,FRA,2019,1,"two\r\nlines"\r\n\r\ndataflow,X:Y(1.0),I,FRA,2020,x,\r\n`;
    const bytes = Buffer.from(text);
    const parts = Array.from({ length: Math.ceil(bytes.length / 3) }, (_, i) => bytes.subarray(i * 3, i * 3 + 3));
    const r = await parseSdmxCsv(Readable.from(parts), { mode: "collect", locations: true });
    expect(r.observations[0]!.location).toEqual({ line: 2 });
    expect(r.issues[0]).toMatchObject({ code: "CSV_NON_NUMERIC_VALUE", location: { line: 5, column: 6, field: "OBS_VALUE" } });
  });

  it("shares one dimension object between the observations of a series", async () => {
    const r = await parseSdmxCsv(`${HEAD}\ndataflow,X:Y(1.0),I,FRA,FTE,2019,1,A,\ndataflow,X:Y(1.0),I,FRA,FTE,2020,2,A,\ndataflow,X:Y(1.0),I,DEU,FTE,2019,3,A,\n`);
    const [a, b, c] = r.observations;
    expect(a!.dimensions).toBe(b!.dimensions);
    expect(a!.dimensions).not.toBe(c!.dimensions);
    expect(a!.attributes).toBe(c!.attributes);
  });

  it("collects every bad row at once", async () => {
    const text = `${HEAD}\ndataflow,X:Y(1.0),I,FRA,FTE,2019,?,A,\ndataflow,X:Y(1.0),Q,FRA,FTE,2020,1,A,\ndataflow,X:Y(1.0),I,FRA,FTE,20X0,1,A,\ndataflow,X:Y(1.0),I,DEU,FTE,2019,1,A\n`;
    const r = await parseSdmxCsv(text, { mode: "collect" });
    expect(r.issues.map((i) => [i.code, i.location.line])).toEqual([
      ["CSV_NON_NUMERIC_VALUE", 2],
      ["SDMX_UNKNOWN_ACTION", 3],
      ["PERIOD_UNKNOWN_FORMAT", 4],
      ["CSV_COLUMN_COUNT_MISMATCH", 5],
    ]);
    expect(r.counts).toEqual({ observations: 1, skipped: 3, issues: 4 });
  });
});
