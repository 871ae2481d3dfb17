// SDMX-JSON measure values: number, null (explicitly missing), "NaN" (SDMX-ML's missing marker),
// numeric text, other text; overflow and negative counts.
import { describe, expect, it } from "vitest";
import { parseSdmxJson } from "./sdmx-json";

function withObservations(observations: string): string {
  return `{"meta": {"id": "V"}, "data": {"structures": [{"dimensions": {"series": [{"id": "REF_AREA", "keyPosition": 0, "values": [{"id": "FRA"}]}],
    "observation": [{"id": "TIME_PERIOD", "keyPosition": 1, "values": [{"id": "2016"}, {"id": "2017"}, {"id": "2018"}, {"id": "2019"}, {"id": "2020"}]}]}}],
    "dataSets": [{"action": "Replace", "series": {"0": {"observations": {${observations}}}}}]}}`;
}

describe("SDMX-JSON values", () => {
  it("reads numbers, null and NaN; numeric text is accepted", async () => {
    const r = await parseSdmxJson(withObservations(`"0": [4.25], "1": [null], "2": ["NaN"], "3": ["12.5"], "4": [-0.5]`));
    expect(r.observations.map((o) => [o.period, o.value])).toEqual([
      ["2016", 4.25],
      ["2017", null],
      ["2018", null],
      ["2019", 12.5],
      ["2020", -0.5],
    ]);
  });

  it("skips an observation without measure (detail=serieskeysonly) without an issue", async () => {
    const r = await parseSdmxJson(withObservations(`"0": [], "1": [3]`));
    expect(r.counts).toEqual({ observations: 1, skipped: 1, issues: 0 });
    expect(r.meta.skips).toEqual({ "no measure value": 1 });
  });

  it("refuses text, overflow and booleans with the observation's path", async () => {
    const r = await parseSdmxJson(withObservations(`"0": ["1,5"], "1": [1e999], "2": [true], "3": [2]`), { mode: "collect" });
    expect(r.issues.map((i) => [i.code, i.location.path])).toEqual([
      ["SDMX_VALUE_NOT_NUMERIC", '$.data.dataSets[0].series["0"].observations["0"][0]'],
      ["VALUE_NOT_FINITE", '$.data.dataSets[0].series["0"].observations["1"][0]'],
      ["SDMX_VALUE_NOT_NUMERIC", '$.data.dataSets[0].series["0"].observations["2"][0]'],
    ]);
    expect(r.observations.map((o) => o.value)).toEqual([2]);
  });

  it("refuses negative values only when the concept is a count", async () => {
    const text = withObservations(`"0": [-3]`);
    expect((await parseSdmxJson(text)).observations[0]!.value).toBe(-3);
    await expect(parseSdmxJson(text, { nonNegative: true })).rejects.toMatchObject({ code: "VALUE_NEGATIVE" });
  });
});
