// Every example of the SDMX-CSV field guide (sdmx-twg/sdmx-csv), 1.0, 2.0.0 and 2.1.0, from
// ../shared/data/formats/sdmx-csv. The examples name no data structure: DIM_3 holds the periods,
// ATTR_* are attributes (the field guide's column names say so).
import { existsSync, readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { parseSdmxCsv, type SdmxCsvOptions } from "./sdmx-csv";

const dir = path.resolve(import.meta.dirname, "../../../shared/data/formats/sdmx-csv");
const present = existsSync(dir);
if (!present) console.warn(`SKIP sdmx-csv samples: ${dir} is absent (reference data lives outside the repository)`);

const ROLES: SdmxCsvOptions = { timeColumn: "DIM_3", attributes: ["ATTR_1", "ATTR_2", "ATTR_3"] };
const read = (rel: string) => readFileSync(path.join(dir, rel));

describe.skipIf(!present)("SDMX-CSV field guide examples", () => {
  it("every example parses in strict mode with the field guide's roles", async () => {
    for (const version of ["1.0", "2.0.0", "2.1.0"]) {
      for (const file of readdirSync(path.join(dir, version))) {
        const valueColumn = /^example-(2|3)\.csv$/.test(file) && version !== "1.0" ? "OBS_VALUE1" : /^example-13/.test(file) ? "MEAS_1" : "OBS_VALUE";
        const r = await parseSdmxCsv(read(`${version}/${file}`), { ...ROLES, valueColumn });
        expect(r.counts.issues, `${version}/${file}`).toBe(0);
      }
    }
  });

  it("2.1.0 example 1: the ordinary case, UPDATED as a custom column", async () => {
    const r = await parseSdmxCsv(read("2.1.0/example-1.csv"), ROLES);
    // example-1.csv line 2: dataflow,ESTAT:NA_MAIN(1.6.0),M,A,B,2014-01,12.4,Y,"Normal, special and other values",N,2021-01-22T13:15:41Z
    expect(r.observations[0]).toEqual({
      dimensions: { DIM_1: "A", DIM_2: "B" },
      period: "2014-01",
      value: 12.4,
      attributes: { ATTR_2: "Y", ATTR_3: "Normal, special and other values", ATTR_1: "N" },
      dataset: "ESTAT:NA_MAIN(1.6.0)",
    });
    expect(r.meta.version).toBe("2.x");
    expect(r.meta.datasets[0]).toMatchObject({ id: "ESTAT:NA_MAIN(1.6.0)", action: "Merge", updated: "2021-01-22T13:15:41Z" });
  });

  it("1.0 example 2 and 2.1.0 example 4: ';' separator, decimal comma, labels", async () => {
    // example-4.csv line 2: ...;A: Value A;B: Value B;2014-01: 2014-01;12,4;Y: Oui;...;N: Non
    for (const file of ["1.0/example-2.csv", "2.1.0/example-4.csv"]) {
      const r = await parseSdmxCsv(read(file), ROLES);
      expect(r.observations.map((o) => [o.dimensions, o.period, o.value, o.attributes.ATTR_1]), file).toEqual([
        [{ DIM_1: "A", DIM_2: "B" }, "2014-01", 12.4, "N"],
        [{ DIM_1: "A", DIM_2: "B" }, "2014-02", 10.8, "Y"],
      ]);
      expect(r.observations[0]!.dataset).toBe(file.startsWith("1.0") ? "ESTAT:NA_MAIN(1.6)" : "ESTAT:NA_MAIN(1.6.0)");
    }
  });

  it("2.1.0 example 6: labels=name, a name column after each component", async () => {
    const r = await parseSdmxCsv(read("2.1.0/example-6.csv"), ROLES);
    expect(r.observations[1]).toMatchObject({ dimensions: { DIM_1: "A", DIM_2: "B" }, period: "2014-02", value: 10.8, attributes: { ATTR_1: "Y", ATTR_3: "Y" } });
  });

  it("2.1.0 example 15: a quoted value with a line break; the next record starts on line 4", async () => {
    const r = await parseSdmxCsv(read("2.1.0/example-15.csv"), { ...ROLES, locations: true });
    expect(r.observations[0]!.attributes.ATTR_1).toBe('<p>This is some "xhtml" with a line\nbreak</p>');
    expect(r.observations.map((o) => o.location)).toEqual([{ line: 2 }, { line: 4 }]);
  });

  it("2.1.0 examples 16-19: Delete rows become deletions, with wildcards and marked components", async () => {
    const r16 = await parseSdmxCsv(read("2.1.0/example-16.csv"), ROLES);
    // example 16 row 2: D,A,B,2014-01,-,,, -> delete OBS_VALUE of A.B 2014-01
    expect(r16.meta.deletions[0]).toEqual({ dataset: "ESTAT:NA_MAIN(1.6.0)", dimensions: { DIM_1: "A", DIM_2: "B" }, period: "2014-01", components: ["OBS_VALUE"], location: { line: 2 } });
    const r17 = await parseSdmxCsv(read("2.1.0/example-17.csv"), ROLES);
    // example 17 row 3: D,,B,,,,-, -> ATTR_3 for every observation with DIM_2=B
    expect(r17.meta.deletions[1]).toMatchObject({ dimensions: { DIM_2: "B" }, components: ["ATTR_3"] });
    const r18 = await parseSdmxCsv(read("2.1.0/example-18.csv"), ROLES);
    // example 18 rows end with a separator after the last header column: read without it
    expect(r18.meta.deletions.map((d) => [d.dimensions, d.period])).toEqual([[{ DIM_2: "A" }, undefined], [{ DIM_2: "B" }, "C"]]);
    const r19 = await parseSdmxCsv(read("2.1.0/example-19a.csv"), ROLES);
    expect(r19.meta.deletions).toEqual([{ dataset: "ESTAT:DSD_NA_MAIN(1.6.0)", dimensions: {}, components: [], location: { line: 2 } }]);
    for (const r of [r16, r17, r18, r19]) expect(r.observations).toEqual([]);
  });

  it("2.1.0 example 9-A: several structures in one file, each observation names its own", async () => {
    const r = await parseSdmxCsv(read("2.1.0/example-9-A.csv"), ROLES);
    expect(r.observations.map((o) => o.dataset)).toEqual(["ESTAT:DF_NA_MAIN(1.6.0)", "ESTAT:DSD_NA_MAIN(1.7.0)", "ESTAT:DPA_NA_MAIN(1.8.0)"]);
    expect(r.meta.datasets.map((d) => d.id)).toEqual(["ESTAT:DF_NA_MAIN(1.6.0)", "ESTAT:DSD_NA_MAIN(1.7.0)", "ESTAT:DPA_NA_MAIN(1.8.0)"]);
  });

  it("2.1.0 example 9-B: placeholder measure text is refused cell by cell", async () => {
    // example-9-B.csv carries "MEASVAL_A1B1C1" / "MEAS_A1B1C1" where numbers would be
    const r = await parseSdmxCsv(read("2.1.0/example-9-B.csv"), { timeColumn: null, valueColumn: "MEAS_A1B1C1", attributes: ["ATTR_A1", "ATTR_B1"], ignore: ["MEAS_C2"], mode: "collect" });
    expect(r.issues.map((i) => [i.code, i.location])).toEqual([
      ["CSV_NON_NUMERIC_VALUE", { line: 2, column: 10, field: "MEAS_A1B1C1" }],
      ["CSV_NON_NUMERIC_VALUE", { line: 3, column: 10, field: "MEAS_A1B1C1" }],
      ["CSV_NON_NUMERIC_VALUE", { line: 4, column: 10, field: "MEAS_A1B1C1" }],
    ]);
  });

  it("2.1.0 example 13: a row for attributes of a partial key is not an observation", async () => {
    const r = await parseSdmxCsv(read("2.1.0/example-13.csv"), { ...ROLES, valueColumn: "MEAS_1" });
    expect(r.observations).toHaveLength(1);
    expect(r.meta.skips).toEqual({ "attribute-only row": 1 });
  });
});
