// SDMX-JSON keys and structures: series keys index structure.dimensions.series, observation keys
// structure.dimensions.observation (SDMX-JSON field guide 2.1.0, "series" and "observations").
import { describe, expect, it } from "vitest";
import { parseSdmxJson } from "./sdmx-json";

function message(dataSet: object, extra: { structureFirst?: boolean } = {}): string {
  const structure = {
    dimensions: {
      dataSet: [{ id: "FREQ", keyPosition: 0, values: [{ id: "A" }] }],
      series: [
        { id: "REF_AREA", keyPosition: 1, values: [{ id: "FRA" }, { id: "DEU" }] },
        { id: "MEASURE", keyPosition: 2, values: [{ id: "FTE" }] },
      ],
      observation: [{ id: "TIME_PERIOD", keyPosition: 3, values: [{ id: "2019" }, { id: "2020" }] }],
    },
    attributes: { series: [{ id: "UNIT_MEASURE", values: [{ id: "PS" }] }], observation: [{ id: "OBS_STATUS", values: [{ id: "A" }, { id: "E" }] }] },
  };
  const parts = [`"header": {"id": "T", "prepared": "2024-01-01"}`, `"structure": ${JSON.stringify(structure)}`, `"dataSets": [${JSON.stringify(dataSet)}]`];
  if (extra.structureFirst === false) parts.splice(1, 2, parts[2]!, parts[1]!);
  return `{${parts.join(",")}}`;
}

describe("SDMX-JSON series keys", () => {
  it("resolves every position of the key to its value id, data-set dimensions included", async () => {
    const r = await parseSdmxJson(message({ action: "Replace", series: { "1:0": { attributes: [0], observations: { "1": [7.5, 1] } } } }));
    expect(r.observations).toEqual([
      { dimensions: { FREQ: "A", REF_AREA: "DEU", MEASURE: "FTE" }, period: "2020", value: 7.5, attributes: { UNIT_MEASURE: "PS", OBS_STATUS: "E" } },
    ]);
  });

  it("reports a key with the wrong number of positions and goes on in collect mode", async () => {
    const r = await parseSdmxJson(message({ series: { "0": { observations: { "0": [1] } }, "1:0": { observations: { "0": [2] } } } }), { mode: "collect" });
    expect(r.issues.map((i) => [i.code, i.location])).toEqual([["SDMX_KEY_LENGTH_MISMATCH", { path: '$.dataSets[0].series["0"]' }]]);
    expect(r.observations.map((o) => o.value)).toEqual([2]);
    expect(r.counts).toEqual({ observations: 1, skipped: 1, issues: 1 });
  });

  it("reports an index past the values of its dimension, naming the dimension", async () => {
    const r = await parseSdmxJson(message({ series: { "0:3": { observations: { "0": [1] } } } }), { mode: "collect" });
    expect(r.issues[0]).toMatchObject({ code: "SDMX_INDEX_OUT_OF_RANGE", location: { path: '$.dataSets[0].series["0:3"]', field: "MEASURE" } });
  });

  it("reads data that come before their structure (held until the structure arrives)", async () => {
    const r = await parseSdmxJson(message({ series: { "0:0": { observations: { "0": [1.25] } } } }, { structureFirst: false }));
    expect(r.observations).toEqual([{ dimensions: { FREQ: "A", REF_AREA: "FRA", MEASURE: "FTE" }, period: "2019", value: 1.25, attributes: {} }]);
  });

  it("reports a data set whose structure never comes", async () => {
    const text = `{"header": {"id": "T"}, "dataSets": [{"series": {"0": {"observations": {"0": [1]}}}}]}`;
    await expect(parseSdmxJson(text)).rejects.toMatchObject({ code: "SDMX_MISSING_STRUCTURE", location: { path: "$.dataSets[0].structure" } });
  });

  it("reports a series key that appears twice in one data set", async () => {
    const text = message({ series: { "0:0": { observations: { "0": [1] } } } }).replace('"0:0":{"observations":{"0":[1]}}', '"0:0":{"observations":{"0":[1]}},"0:0":{"observations":{"1":[2]}}');
    const r = await parseSdmxJson(text, { mode: "collect" });
    expect(r.issues[0]).toMatchObject({ code: "JSON_DUPLICATE_KEY", location: { path: '$.dataSets[0].series["0:0"]' } });
  });
});

describe("SDMX-JSON actions", () => {
  it("turns a Delete data set's series without observations into a series deletion", async () => {
    // SDMX-JSON field guide 2.1.0, action Delete: "Deletion is hereby assumed to take place at the lowest level of detail provided"
    const r = await parseSdmxJson(message({ action: "Delete", series: { "1:0": {} } }));
    expect(r.observations).toEqual([]);
    expect(r.meta.deletions).toEqual([{ dimensions: { FREQ: "A", REF_AREA: "DEU", MEASURE: "FTE" }, components: [], location: { path: '$.dataSets[0].series["1:0"]' } }]);
  });

  it("reads Information, Append, Merge and Replace as data", async () => {
    for (const action of ["Information", "Append", "Merge", "Replace"]) {
      const r = await parseSdmxJson(message({ action, series: { "0:0": { observations: { "0": [1] } } } }));
      expect(r.observations, action).toHaveLength(1);
      expect(r.meta.datasets[0]!.action).toBe(action);
    }
  });
});
