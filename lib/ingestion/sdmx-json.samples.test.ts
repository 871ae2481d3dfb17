// SDMX-JSON official samples (sdmx-twg/sdmx-json, data-message/samples) and a real OECD.Stat
// response, from ../shared/data/formats/sdmx-json.
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { parseSdmxJson } from "./sdmx-json";

const dir = path.resolve(import.meta.dirname, "../../../shared/data/formats/sdmx-json");
const present = existsSync(dir);
if (!present) console.warn(`SKIP sdmx-json samples: ${dir} is absent (reference data lives outside the repository)`);

const read = (rel: string) => readFileSync(path.join(dir, rel));
const EXR_KEY = { FREQ: "D", CURRENCY_DENOM: "EUR", EXR_TYPE: "SP00", EXR_SUFFIX: "A" };

describe.skipIf(!present)("SDMX-JSON samples", () => {
  for (const version of ["1.0", "2.0.0", "2.1.0"]) {
    it(`${version} exr-time-series: series layout`, async () => {
      const r = await parseSdmxJson(read(`${version}/exr-time-series.json`));
      expect(r.counts).toEqual({ observations: 4, skipped: 0, issues: 0 });
      expect(r.meta.version).toBe(version);
      // exr-time-series.json series "0" (CURRENCY index 0 = NZD), observation "0" (TIME_PERIOD 2013-01-18): [1.5931, 0]
      expect(r.observations[0]).toEqual({
        dimensions: { ...EXR_KEY, CURRENCY: "NZD" },
        period: "2013-01-18",
        value: 1.5931,
        attributes: { TIME_FORMAT: "P1D", TITLE: "New Zealand dollar (NZD)", OBS_STATUS: "A" },
        dataset: "ECB:EXR(1.0)",
      });
      // series "1" (RUB), observation "1" (2013-01-21): [40.3, 0, 1]; series attribute TITLE index 1
      expect(r.observations[3]).toMatchObject({ dimensions: { CURRENCY: "RUB" }, period: "2013-01-21", value: 40.3, attributes: { TITLE: "Russian rouble (RUB)" } });
      // one object shared by the observations of a series
      expect(r.observations[0]!.dimensions).toBe(r.observations[1]!.dimensions);
    });

    it(`${version} exr-flat: flat observations layout gives the same observations`, async () => {
      const flat = await parseSdmxJson(read(`${version}/exr-flat.json`));
      const series = await parseSdmxJson(read(`${version}/exr-time-series.json`));
      expect(flat.counts.issues).toBe(0);
      const key = (o: { dimensions: Record<string, string>; period: string; value: number | null }) => `${o.dimensions.CURRENCY}|${o.period}|${o.value}`;
      expect(flat.observations.map(key).sort()).toEqual(series.observations.map(key).sort());
    });

    it(`${version} exr-cross-section: TIME_PERIOD at series level, CURRENCY at observation level`, async () => {
      const r = await parseSdmxJson(read(`${version}/exr-cross-section.json`));
      expect(r.counts).toEqual({ observations: 4, skipped: 0, issues: 0 });
      // series "0" = 2013-01-18, observation "1" = RUB: [40.3426, 0, 1]
      expect(r.observations).toContainEqual(expect.objectContaining({ period: "2013-01-18", value: 40.3426, dimensions: { ...EXR_KEY, CURRENCY: "RUB" } }));
    });

    it(`${version} agri: data set dimension FREQ, data set attributes give the units`, async () => {
      const r = await parseSdmxJson(read(`${version}/agri.json`));
      expect(r.counts.issues).toBe(0);
      // agri.json: REF_AREA ASIKHM001, 2014 -> 350.154 (observation "0:0")
      expect(r.observations[0]).toMatchObject({ dimensions: { FREQ: "A", REF_AREA: "ASIKHM001" }, period: "2014", value: 350.154 });
      expect(r.meta.datasets[0]!.units).toEqual({ "*": { UNIT_MEASURE: "TONES", UNIT_MULT: "3", BASE_PER: "2010_100" } });
    });
  }

  it("1.0 agri: omitted observation attributes take the component default", async () => {
    // agri.json 1.0: OBS_STATUS "default": "A"; observation "0:1" is [389.385, 1] (SOURCE index 1 only)
    const r = await parseSdmxJson(read("1.0/agri.json"));
    expect(r.observations[1]).toMatchObject({ period: "2015", value: 389.385, attributes: { SOURCE: "MAFF_Agricultural Statistics_2015", OBS_STATUS: "A" } });
  });

  it("2.x agri: dimension-group attributes and localised values", async () => {
    // agri.json 2.1.0 dimensionGroupAttributes "::1": SOURCE ["MAFF_Agricultural Statistics_2015", "Other sources"]; "0:0:" SERIES_COMMENT {"en": ...}
    const r = await parseSdmxJson(read("2.1.0/agri.json"));
    expect(r.observations[1]).toMatchObject({
      period: "2015",
      attributes: { SOURCE: "MAFF_Agricultural Statistics_2015;Other sources", SERIES_COMMENT: "Comment for Annual data for Banteay Meanchey", EMBARGO_TIME: "2019-03-18T11:00:00" },
    });
    expect(r.observations[1]!.attributes.OBS_STATUS).toBeUndefined(); // null in the observation array: not set
  });

  for (const version of ["1.0", "2.0.0", "2.1.0"]) {
    it(`${version} exr-action-delete: the Delete data set becomes a deletion, not data`, async () => {
      const r = await parseSdmxJson(read(`${version}/exr-action-delete.json`), { mode: "collect" });
      expect(r.meta.datasets.map((d) => d.action)).toEqual(["Replace", "Delete"]);
      // data set 1 (Delete), series "0" (TIME_PERIOD 2013-01-18), observation "0" (CURRENCY NZD): []
      expect(r.meta.deletions).toEqual([
        { dataset: "ECB:EXR(1.0)", dimensions: { ...EXR_KEY, CURRENCY: "NZD" }, period: "2013-01-18", components: [], location: { path: '$.data.dataSets[1].series["0"].observations["0"]' } },
      ]);
      expect(r.meta.skips.deletion).toBe(1);
      // The Replace data set: two RUB observations. The sample lists TITLE before OBS_STATUS in
      // structure.attributes.observation but writes [value, 0, 1] as in exr-cross-section (OBS_STATUS first):
      // OBS_STATUS index 1 does not exist, reported at its place.
      expect(r.observations.map((o) => [o.period, o.value])).toEqual([["2013-01-18", 40.3426], ["2013-01-21", 40.3]]);
      expect(r.issues.map((i) => [i.code, i.location])).toEqual([
        ["SDMX_INDEX_OUT_OF_RANGE", { path: '$.data.dataSets[0].series["0"].observations["1"][2]', field: "OBS_STATUS" }],
        ["SDMX_INDEX_OUT_OF_RANGE", { path: '$.data.dataSets[0].series["1"].observations["1"][2]', field: "OBS_STATUS" }],
      ]);
    });
  }

  it("2.1.0 constructed-sample-full: every data set layout and detail level", async () => {
    const r = await parseSdmxJson(read("2.1.0/constructed-sample-full.json"), { mode: "collect" });
    // data sets 0 (series), 1 (flat) and 3 ("dataonly") give 4 observations each; 2 ("serieskeysonly") has none
    expect(r.counts.observations).toBe(12);
    expect(r.meta.skips["no measure value"]).toBe(4);
    expect(r.meta.serviceErrors).toEqual([{ code: 400, title: "Invalid number of dimensions in parameter key" }]);
    // data set 0, series "0", observation "0": [1.5931, "2013-03-18T11:00:00", 0]; series attribute ID index 0; group "0::0::0:" UNIT_MEAS
    expect(r.observations[0]).toMatchObject({ period: "2013-01-18", value: 1.5931, attributes: { ID: "ID1", UNIT_MEAS: "NC", EMBARGO_TIME: "2013-03-18T11:00:00", DESCRIPTION: "Description value 1;Description value 2" } });
    // data set 4 ("nodata") writes no measure, contrary to the field guide's array layout: its first
    // element (a date-time) is read as the measure and refused.
    expect(r.issues.map((i) => i.code)).toEqual(Array(4).fill("SDMX_VALUE_NOT_NUMERIC"));
    expect(r.issues[0]!.location).toEqual({ path: '$.data.dataSets[4].observations["0:0"][0]' });
  });

  it("real OECD.Stat 1.0 response: no time dimension, attributes without values take no position", async () => {
    const r = await parseSdmxJson(read("real-oecd-1.0/oecd-PART2-all-all.json"));
    expect(r.counts).toEqual({ observations: 7, skipped: 0, issues: 0 });
    expect(r.meta.prepared).toBe("2021-06-19T14:06:41.689336Z");
    expect(r.meta.datasets[0]).toMatchObject({ id: "PART2", timeDimension: null });
    // observation "5:0:2:0:0:0": [-2.45141648554599, 1] -> NZL, PER=CHG, OBS_STATUS index 1 = "w"
    expect(r.observations.find((o) => o.value === -2.45141648554599)).toEqual({
      dimensions: { LOCATION: "NZL", IND: "5CLAT", PER: "CHG", GRD: "FOG", FLD: "MAT", MSR: "MN" },
      period: "",
      value: -2.45141648554599,
      attributes: { OBS_STATUS: "w" },
      dataset: "PART2",
    });
  });

  it("header/meta: prepared timestamp, message id, dataflow id", async () => {
    const r = await parseSdmxJson(read("1.0/exr-time-series.json"));
    // exr-time-series.json 1.0 header: id 62b5f19d-..., prepared 2012-11-29T08:40:26Z, sender ECB
    expect(r.meta).toMatchObject({ messageId: "62b5f19d-f1c9-495d-8446-a3661ed24753", prepared: "2012-11-29T08:40:26Z", sender: "ECB" });
    expect(r.meta.datasets[0]).toMatchObject({ id: "ECB:EXR(1.0)", action: "Information", timeDimension: "TIME_PERIOD" });
  });
});
