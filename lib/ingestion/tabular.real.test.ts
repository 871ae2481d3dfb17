// Plain CSV with a mapping, on real files: the OECD legacy MSTI download (with a byte-order mark)
// and World Bank WDI vintages, from ../shared/data.
import { existsSync, readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { parseTabular } from "./tabular";

const data = path.resolve(import.meta.dirname, "../../../shared/data");
const present = existsSync(path.join(data, "oecd-legacy")) && existsSync(path.join(data, "wdi"));
if (!present) console.warn(`SKIP real CSV files: ${data} is absent (reference data lives outside the repository)`);

describe.skipIf(!present)("real CSV files", () => {
  it("OECD legacy researchers file: BOM, quoted cells, flags kept as an attribute", async () => {
    const file = path.join(data, "oecd-legacy/oecd_global_researchers.csv");
    const bytes = readFileSync(file);
    expect([...bytes.subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]); // the file starts with a byte-order mark
    const r = await parseTabular(bytes, {
      map: "economy=LOCATION,period=TIME,value=Value,status=Flag Codes",
      dimensions: ["INDICATOR", "SUBJECT", "MEASURE", "FREQUENCY"],
      file: "oecd_global_researchers.csv",
    });
    expect(r.counts).toEqual({ observations: 3111, skipped: 0, issues: 0 }); // 3112 lines, one header
    // oecd_global_researchers.csv line 2: "AUS","RESEARCHER","TOT","1000EMPLOYED","A","1981",3.78998106731616,
    expect(r.observations[0]).toEqual({
      dimensions: { LOCATION: "AUS", INDICATOR: "RESEARCHER", SUBJECT: "TOT", MEASURE: "1000EMPLOYED", FREQUENCY: "A" },
      period: "1981",
      value: 3.78998106731616,
      attributes: { "Flag Codes": "" },
    });
    // the same file: "OECD","RESEARCHER","TOT","1000EMPLOYED","A","2006",7.10450911534927,
    expect(r.observations.find((o) => o.dimensions.LOCATION === "OECD" && o.dimensions.MEASURE === "1000EMPLOYED" && o.period === "2006")!.value).toBe(7.10450911534927);
    expect(r.meta.mapping).toEqual({ economy: "LOCATION", period: "TIME", value: "Value", status: "Flag Codes" });
  });

  it("OECD legacy file without its key columns: the duplicates say so, with both lines", async () => {
    const r = await parseTabular(readFileSync(path.join(data, "oecd-legacy/oecd_global_researchers.csv")), { map: "economy=LOCATION,period=TIME,value=Value", mode: "collect" });
    // NOR 1997 is on line 564 (1000EMPLOYED) and again on line 1123 (WOMEN, PC_RESEARCHER)
    expect(r.issues[0]).toMatchObject({ code: "DUPLICATE_OBSERVATION", location: { line: 1123, column: 7, field: "Value" } });
    expect(r.issues[0]!.message).toContain("already on line 564");
  });

  it("every WDI vintage parses with Country Code, Year, Value", async () => {
    for (const indicator of readdirSync(path.join(data, "wdi"))) {
      for (const file of readdirSync(path.join(data, "wdi", indicator)).filter((f) => f.endsWith(".csv"))) {
        const text = readFileSync(path.join(data, "wdi", indicator, file), "utf8");
        const rows = text.trimEnd().split("\n").length - 1;
        const r = await parseTabular(text, { map: "economy=Country Code,period=Year,value=Value", attributes: ["Country Name"] });
        expect(r.counts, `${indicator}/${file}`).toEqual({ observations: rows, skipped: 0, issues: 0 });
      }
    }
    // WDI sp.pop.scie.rd.p6, vintage 2026-04-01: France,FRA,2019,4773.97249
    const r = await parseTabular(readFileSync(path.join(data, "wdi/sp.pop.scie.rd.p6/2026-04-01.csv")), { map: "economy=Country Code,period=Year,value=Value" });
    expect(r.observations.find((o) => o.dimensions["Country Code"] === "FRA" && o.period === "2019")!.value).toBe(4773.97249);
  });
});
