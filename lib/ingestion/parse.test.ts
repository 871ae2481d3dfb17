// parsePayload dispatches by format name; iterateObservations streams with backpressure.
import { Readable } from "node:stream";
import { describe, expect, it } from "vitest";
import { iterateObservations, parsePayload, parsePayloadStream } from "./parse";

const SDMX_CSV = "STRUCTURE,STRUCTURE_ID,ACTION,REF_AREA,TIME_PERIOD,OBS_VALUE\ndataflow,X:Y(1.0),I,FRA,2019,1\n";

describe("parsePayload", () => {
  it("dispatches each format name to its parser", async () => {
    const results = await Promise.all([
      parsePayload("sdmx-csv", SDMX_CSV),
      parsePayload("csv", "c,y,v\nFRA,2019,1\n", { map: "economy=c,period=y,value=v" }),
      parsePayload("jsonstat", JSON.stringify({ version: "2.0", class: "dataset", id: ["c", "y"], size: [1, 1], role: { time: ["y"] }, dimension: { c: { category: { index: ["FRA"] } }, y: { category: { index: ["2019"] } } }, value: [1] })),
      parsePayload("worldbank-json", JSON.stringify([{ page: 1, pages: 1, per_page: 50, total: 1 }, [{ indicator: { id: "I" }, country: { id: "FR" }, countryiso3code: "FRA", date: "2019", value: 1 }]])),
      parsePayload("sdmx-json", JSON.stringify({ header: {}, structure: { dimensions: { series: [{ id: "REF_AREA", values: [{ id: "FRA" }] }], observation: [{ id: "TIME_PERIOD", values: [{ id: "2019" }] }] } }, dataSets: [{ series: { "0": { observations: { "0": [1] } } } }] })),
    ]);
    expect(results.map((r) => [r.meta.format, r.observations[0]!.period, r.observations[0]!.value])).toEqual([
      ["sdmx-csv", "2019", 1],
      ["csv", "2019", 1],
      ["jsonstat", "2019", 1],
      ["worldbank-json", "2019", 1],
      ["sdmx-json", "2019", 1],
    ]);
  });

  it("streams to a callback without keeping observations", async () => {
    let n = 0;
    const summary = await parsePayloadStream("sdmx-csv", SDMX_CSV, {}, () => n++);
    expect(n).toBe(1);
    expect(summary).not.toHaveProperty("observations");
    expect(summary.counts.observations).toBe(1);
  });
});

describe("iterateObservations", () => {
  it("yields every observation in order and returns the summary, pausing the parser meanwhile", async () => {
    const rows = Array.from({ length: 2000 }, (_, i) => `dataflow,X:Y(1.0),I,E${i % 50},${1900 + Math.floor(i / 50)},${i}\n`);
    const chunks = ["STRUCTURE,STRUCTURE_ID,ACTION,REF_AREA,TIME_PERIOD,OBS_VALUE\n", ...rows].map((s) => Buffer.from(s));
    let pulled = 0;
    const source = Readable.from(
      (function* () {
        for (const c of chunks) {
          pulled++;
          yield c;
        }
      })(),
    );
    const it = iterateObservations("sdmx-csv", source, {}, 100);
    const values: number[] = [];
    let maxAhead = 0;
    for (;;) {
      const step = await it.next();
      if (step.done) {
        expect(step.value.counts.observations).toBe(2000);
        break;
      }
      values.push(step.value.value!);
      maxAhead = Math.max(maxAhead, pulled - values.length);
    }
    expect(values).toEqual(rows.map((_, i) => i));
    // the parser never ran far ahead of the consumer (high-water mark 100 observations, plus stream buffering)
    expect(maxAhead).toBeLessThan(1000);
  });

  it("rethrows the parser's error after the observations read before it", async () => {
    const it = iterateObservations("sdmx-csv", `${SDMX_CSV}dataflow,X:Y(1.0),I,FRA,2020,oops\n`);
    const seen: number[] = [];
    await expect(
      (async () => {
        for await (const o of it) seen.push(o.value!);
      })(),
    ).rejects.toMatchObject({ code: "CSV_NON_NUMERIC_VALUE", location: { line: 3 } });
    expect(seen).toEqual([1]);
  });
});
