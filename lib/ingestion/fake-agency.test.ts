// Tests of the fake agency itself (test/fixtures/fake-agency): the shapes it serves, its faults,
// validators and request log. They live here because the vitest "unit" project collects lib/**.
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import { startFakeAgency, type FakeAgency, type FakeObservation } from "@/test/fixtures/fake-agency";
import { sdmxFormat } from "@/test/fixtures/fake-agency/index";

const FORMATS = path.resolve(import.meta.dirname, "../../../shared/data/formats");
const haveFormats = existsSync(FORMATS);

let agency: FakeAgency;
beforeEach(async () => {
  agency = await startFakeAgency();
});
afterEach(async () => {
  await agency.close();
});

const get = (url: string, headers: Record<string, string> = {}) => fetch(url, { headers });
const SDMX_JSON = "application/vnd.sdmx.data+json;version=1.0.0";
const SDMX_CSV = "application/vnd.sdmx.data+csv;version=1.0.0";

interface SdmxDim {
  id: string;
  keyPosition?: number;
  values: { id: string }[];
}
interface SdmxMessage {
  header: { id: string; prepared: string };
  dataSets: {
    action: string;
    series?: Record<string, { attributes: number[]; observations: Record<string, [number | null, number | null]> }>;
    observations?: Record<string, (number | null)[]>;
  }[];
  structure: {
    dimensions: { dataSet: SdmxDim[]; series: SdmxDim[]; observation: SdmxDim[] };
    attributes: { series: SdmxDim[]; observation: SdmxDim[] };
  };
}

/** Decodes a series-layout SDMX-JSON 1.0 message into (area, measure, period, value, status). */
function decodeSeries(msg: SdmxMessage) {
  const dims = msg.structure.dimensions;
  const statuses = msg.structure.attributes.observation[0]?.values ?? [];
  const out: { area: string; measure: string; period: string; value: number | null; status?: string }[] = [];
  for (const [key, s] of Object.entries(msg.dataSets[0]?.series ?? {})) {
    const idx = key.split(":").map(Number);
    const area = dims.series[1]?.values[idx[1] as number]?.id as string;
    const measure = dims.series[2]?.values[idx[2] as number]?.id as string;
    for (const [o, [value, st]] of Object.entries(s.observations)) {
      const period = dims.observation[0]?.values[Number(o)]?.id as string;
      out.push({ area, measure, period, value, ...(st === null ? {} : { status: statuses[st]?.id }) });
    }
  }
  return out.sort((a, b) => `${a.measure}${a.area}${a.period}`.localeCompare(`${b.measure}${b.area}${b.period}`));
}

function expected(series: string, filter: (o: FakeObservation) => boolean = () => true) {
  return agency.release.observations
    .filter((o) => o.series === series && filter(o))
    .map((o) => ({ area: o.economy, measure: o.series, period: o.period, value: o.value, ...(o.status ? { status: o.status } : {}) }))
    .sort((a, b) => `${a.measure}${a.area}${a.period}`.localeCompare(`${b.measure}${b.area}${b.period}`));
}

describe("SDMX 2.1 REST data route", () => {
  it("serves SDMX-JSON 1.0 on Accept, with series that decode to the release's observations", async () => {
    const res = await get(`${agency.urls.sdmx}/data/TEST,DF_RD,1.0/A..RSE`, { accept: SDMX_JSON });
    expect(res.status).toBe(200);
    expect(res.headers.get("content-type")).toBe("application/vnd.sdmx.data+json; charset=utf-8; version=1.0.0");
    const msg = (await res.json()) as SdmxMessage;
    expect(msg.structure.dimensions.series.map((d) => [d.id, d.keyPosition])).toEqual([
      ["FREQ", 0],
      ["REF_AREA", 1],
      ["MEASURE", 2],
    ]);
    expect(msg.structure.dimensions.observation.map((d) => d.id)).toEqual(["TIME_PERIOD"]);
    expect(decodeSeries(msg)).toEqual(expected("RSE"));
  });

  it("has the top-level layout of the official SDMX-JSON 1.0 sample", async (ctx) => {
    if (!haveFormats) ctx.skip(`reference samples absent: ${FORMATS} (../shared/data)`);
    // sdmx-twg/sdmx-json 1.0 sample exr-time-series.json (../shared/data/formats/sdmx-json/1.0)
    const sample = JSON.parse(readFileSync(path.join(FORMATS, "sdmx-json/1.0/exr-time-series.json"), "utf8"));
    const msg = (await (await get(`${agency.urls.sdmx}/data/DF_RD/all`, { accept: SDMX_JSON })).json()) as SdmxMessage;
    expect(Object.keys(msg).sort()).toEqual(Object.keys(sample).sort());
    expect(Object.keys(msg.structure.dimensions).sort()).toEqual(Object.keys(sample.structure.dimensions).sort());
    expect(Object.keys(msg.structure.attributes).sort()).toEqual(
      expect.arrayContaining(Object.keys(sample.structure.attributes).filter((k) => k !== "dataSet").sort()),
    );
    const keyShape = /^\d+(:\d+)*$/;
    expect(Object.keys(sample.dataSets[0].series).every((k: string) => keyShape.test(k))).toBe(true);
    expect(Object.keys(msg.dataSets[0]?.series ?? {}).every((k) => keyShape.test(k))).toBe(true);
  });

  it("serves the flat layout with dimensionAtObservation=AllDimensions", async () => {
    const res = await get(`${agency.urls.sdmx}/data/DF_RD/A.GRC.RSE?dimensionAtObservation=AllDimensions`, {
      accept: SDMX_JSON,
    });
    const msg = (await res.json()) as SdmxMessage;
    expect(msg.structure.dimensions.series).toEqual([]);
    expect(msg.structure.dimensions.observation.map((d) => d.id)).toEqual(["FREQ", "REF_AREA", "MEASURE", "TIME_PERIOD"]);
    expect(msg.dataSets[0]?.observations).toEqual({ "0:0:0:0": [34_000, null, 0], "0:0:0:1": [35_000, null, 0] });
  });

  it("serves SDMX-CSV 1.0 on Accept, with the header of the official sample", async () => {
    const res = await get(`${agency.urls.sdmx}/data/TEST,DF_RD/A.FRA.RSE?startPeriod=2021`, { accept: SDMX_CSV });
    expect(res.headers.get("content-type")).toBe("application/vnd.sdmx.data+csv; charset=utf-8; version=1.0.0");
    expect(await res.text()).toBe(
      "DATAFLOW,FREQ,REF_AREA,MEASURE,TIME_PERIOD,OBS_VALUE,OBS_STATUS,UNIT_MEASURE\r\n" +
        "TEST:DF_RD(1.0),A,FRA,RSE,2021,320000,,FTE\r\n",
    );
  });

  it("names the flow in the DATAFLOW column like the official SDMX-CSV 1.0 example", async (ctx) => {
    if (!haveFormats) ctx.skip(`reference samples absent: ${FORMATS} (../shared/data)`);
    // sdmx-twg/sdmx-csv field guide, 1.0 example 1: "DATAFLOW,..." then "ESTAT:NA_MAIN(1.6),..."
    const sample = readFileSync(path.join(FORMATS, "sdmx-csv/1.0/example-1.csv"), "utf8").split(/\r?\n/);
    const ours = (await (await get(`${agency.urls.sdmx}/data/DF_RD/all`, { accept: SDMX_CSV })).text()).split("\r\n");
    expect(ours[0]?.split(",")[0]).toBe(sample[0]?.split(",")[0]);
    const refShape = /^[A-Za-z0-9_.@-]+:[A-Za-z0-9_@-]+\([0-9.]+\)$/;
    expect(sample[1]?.split(",")[0]).toMatch(refShape);
    expect(ours[1]?.split(",")[0]).toMatch(refShape);
  });

  it("lets the format parameter override Accept", async () => {
    const res = await get(`${agency.urls.sdmx}/data/DF_RD/all?format=csvdata`, { accept: SDMX_JSON });
    expect(res.headers.get("content-type")).toContain("application/vnd.sdmx.data+csv");
  });

  it("answers 406 without an SDMX data media type, 400 for a key of the wrong length, 404 for no results", async () => {
    expect((await get(`${agency.urls.sdmx}/data/DF_RD/all`, { accept: "*/*" })).status).toBe(406);
    expect((await get(`${agency.urls.sdmx}/data/DF_RD/A.FRA`, { accept: SDMX_JSON })).status).toBe(400);
    expect((await get(`${agency.urls.sdmx}/data/DF_RD/A.JPN.RSE`, { accept: SDMX_JSON })).status).toBe(404);
    expect((await get(`${agency.urls.sdmx}/data/OTHER,DF_RD/all`, { accept: SDMX_JSON })).status).toBe(404);
  });

  it("picks the media type with the highest q", () => {
    expect(sdmxFormat(null, `${SDMX_JSON};q=0.5, ${SDMX_CSV};q=0.9`)).toBe("csv");
    expect(sdmxFormat(null, `${SDMX_CSV};q=0, ${SDMX_JSON}`)).toBe("json");
    expect(sdmxFormat(null, "application/json")).toBeNull();
  });
});

describe("JSON-stat 2.0 route (Eurostat style)", () => {
  interface JsonStat {
    version: string;
    class: string;
    id: string[];
    size: number[];
    dimension: Record<string, { category: { index: Record<string, number> } }>;
    value: Record<string, number>;
    status: Record<string, string>;
  }

  it("serves a dataset whose size matches its categories and whose values sit at row-major positions", async () => {
    const res = await get(`${agency.urls.jsonstat}/data/rd_p_persocc?format=JSON&lang=EN`);
    expect(res.status).toBe(200);
    const ds = (await res.json()) as JsonStat;
    expect([ds.version, ds.class]).toEqual(["2.0", "dataset"]);
    expect(ds.id).toEqual(["freq", "unit", "geo", "time"]);
    expect(ds.size).toEqual(ds.id.map((d) => Object.keys(ds.dimension[d]?.category.index ?? {}).length));
    expect(ds.dimension.geo?.category.index).toEqual({ DE: 0, EL: 1, FR: 2 }); // Greece is EL at Eurostat
    const at = (geo: string, time: string) =>
      String((ds.dimension.geo?.category.index[geo] as number) * 2 + (ds.dimension.time?.category.index[time] as number));
    expect(ds.value[at("FR", "2021")]).toBe(320_000);
    expect(ds.status[at("FR", "2021")]).toBe("p");
    expect(at("EL", "2021") in ds.value).toBe(false); // missing value left out of the sparse object
  });

  it("has the members of the official JSON-stat 2.0 sample dataset", async (ctx) => {
    if (!haveFormats) ctx.skip(`reference samples absent: ${FORMATS} (../shared/data)`);
    // json-stat.org sample canada.json (../shared/data/formats/json-stat/2.0)
    const sample = JSON.parse(readFileSync(path.join(FORMATS, "json-stat/2.0/canada.json"), "utf8"));
    const ds = (await (await get(`${agency.urls.jsonstat}/data/rd_p_persocc?format=JSON`)).json()) as JsonStat;
    for (const member of ["version", "class", "id", "size", "dimension", "value", "role"]) {
      expect(member in sample && member in ds).toBe(true);
    }
    expect(ds.size.length).toBe(ds.id.length);
    expect(sample.size.length).toBe(sample.id.length);
  });

  it("filters on dimension parameters and refuses unknown ones", async () => {
    const ds = (await (await get(`${agency.urls.jsonstat}/data/rd_p_persocc?format=JSON&geo=EL&geo=DE&time=2020`)).json()) as JsonStat;
    expect(ds.size).toEqual([1, 1, 2, 1]);
    expect(ds.value).toEqual({ "0": 400_000, "1": 34_000 });
    expect((await get(`${agency.urls.jsonstat}/data/rd_p_persocc?format=JSON&sectperf=TOTAL`)).status).toBe(400);
    expect((await get(`${agency.urls.jsonstat}/data/unknown_ds?format=JSON`)).status).toBe(404);
  });
});

describe("World Bank indicators API v2 route", () => {
  const url = (q: string) => `${agency.urls.worldbank}/country/all/indicator/SP.POP.SCIE.RD.P6?format=json&${q}`;

  it("pages by per_page: 6 rows at per_page=2 make 3 pages, newest year first per economy", async () => {
    const pages = await Promise.all([1, 2, 3].map(async (p) => (await get(url(`per_page=2&page=${p}`))).json()));
    for (const [i, [head, rows]] of pages.entries()) {
      expect(head).toEqual({ page: i + 1, pages: 3, per_page: 2, total: 6, lastupdated: "2026-01-15" });
      expect(rows).toHaveLength(2);
    }
    const all = pages.flatMap((p) => p[1] as { countryiso3code: string; date: string; value: number | null }[]);
    expect(all.map((r) => `${r.countryiso3code} ${r.date}`)).toEqual([
      "DEU 2021", "DEU 2020", "FRA 2021", "FRA 2020", "GRC 2021", "GRC 2020",
    ]);
    expect(pages[0]?.[1]?.[0]).toEqual({
      indicator: { id: "SP.POP.SCIE.RD.P6", value: "Researchers in R&D (per million people)" },
      country: { id: "DE", value: "Germany" },
      countryiso3code: "DEU",
      date: "2021",
      value: 5100,
      unit: "",
      obs_status: "",
      decimal: 0,
    });
  });

  it("sends per_page as a string when asked to, as the live API sometimes does", async () => {
    const stringy = await startFakeAgency({ worldBankPerPageAsString: true });
    try {
      const res = await get(`${stringy.urls.worldbank}/country/FR;DEU/indicator/SP.POP.TOTL?format=json&per_page=3`);
      const [head, rows] = (await res.json()) as [{ per_page: unknown; total: number }, unknown[]];
      expect(head.per_page).toBe("3");
      expect(head.total).toBe(4);
      expect(rows).toHaveLength(3);
    } finally {
      await stringy.close();
    }
  });

  it("filters by date range, answers the API's message for an unknown indicator, and needs format=json", async () => {
    const [head] = (await (await get(url("date=2021:2021"))).json()) as [{ total: number }];
    expect(head.total).toBe(3);
    const msg = await (await get(`${agency.urls.worldbank}/country/all/indicator/NO.SUCH?format=json`)).json();
    expect(msg).toEqual([
      { message: [{ id: "175", key: "Invalid format", value: "The indicator was not found. It may have been deleted or archived." }] },
    ]);
    expect((await get(`${agency.urls.worldbank}/country/all/indicator/SP.POP.TOTL`)).status).toBe(400);
  });
});

describe("validators, releases, faults and the request log", () => {
  const wb = () => `${agency.urls.worldbank}/country/all/indicator/SP.POP.TOTL?format=json`;

  it("answers 304 to a matching If-None-Match (weak comparison) or an up-to-date If-Modified-Since", async () => {
    const first = await get(wb());
    const etag = first.headers.get("etag") as string;
    const lm = first.headers.get("last-modified") as string;
    expect(lm).toBe("Thu, 15 Jan 2026 09:00:00 GMT");
    expect((await get(wb(), { "if-none-match": etag })).status).toBe(304);
    expect((await get(wb(), { "if-none-match": `"other", W/${etag}` })).status).toBe(304);
    expect((await get(wb(), { "if-none-match": "*" })).status).toBe(304);
    expect((await get(wb(), { "if-modified-since": lm })).status).toBe(304);
    expect((await get(wb(), { "if-modified-since": "Wed, 14 Jan 2026 09:00:00 GMT" })).status).toBe(200);
    // RFC 9110 13.1.3: If-Modified-Since is ignored when If-None-Match is present
    expect((await get(wb(), { "if-none-match": '"stale"', "if-modified-since": lm })).status).toBe(200);
    const notModified = await get(wb(), { "if-none-match": etag });
    expect(notModified.headers.get("etag")).toBe(etag);
    expect(await notModified.text()).toBe("");
  });

  it("publish swaps the data, the ETag and Last-Modified", async () => {
    const before = await get(wb());
    const etag = before.headers.get("etag") as string;
    agency.publish({ label: "release 2", observations: [{ series: "SP.POP.TOTL", economy: "FRA", period: "2022", value: 1 }] });
    expect(agency.release.label).toBe("release 2");
    const after = await get(wb(), { "if-none-match": etag });
    expect(after.status).toBe(200);
    expect(after.headers.get("etag")).not.toBe(etag);
    expect(after.headers.get("last-modified")).toBe("Fri, 16 Jan 2026 09:00:00 GMT");
    const [head, rows] = (await after.json()) as [{ total: number }, { value: number }[]];
    expect(head.total).toBe(1);
    expect(rows[0]?.value).toBe(1);
  });

  it("applies a fault the given number of times, only on its route, and records what it did", async () => {
    agency.inject({ kind: "status", status: 429, retryAfter: 3 }, { times: 2, route: "worldbank" });
    const sdmx = await get(`${agency.urls.sdmx}/data/DF_RD/all`, { accept: SDMX_CSV });
    const r1 = await get(wb());
    const r2 = await get(wb());
    const r3 = await get(wb());
    expect([sdmx.status, r1.status, r2.status, r3.status]).toEqual([200, 429, 429, 200]);
    expect(r1.headers.get("retry-after")).toBe("3");
    expect(agency.requests.map((r) => [r.route, r.status, r.fault])).toEqual([
      ["sdmx", 200, undefined],
      ["worldbank", 429, "status"],
      ["worldbank", 429, "status"],
      ["worldbank", 200, undefined],
    ]);
    expect(agency.requests[0]?.headers.accept).toBe(SDMX_CSV);
    expect(agency.requests[1]?.searchParams.get("format")).toBe("json");
  });

  it("serves a malformed payload on an invalid fault", async () => {
    agency.inject({ kind: "invalid" });
    const res = await get(wb());
    expect(res.status).toBe(200);
    await expect(res.json()).rejects.toThrow(SyntaxError);
  });

  it("serves files of the release as they stand", async () => {
    const bytes = new Uint8Array([0xef, 0xbb, 0xbf, 0x41, 0x2c, 0x42, 0x0a]);
    agency.publish({ files: { "msti.csv": { body: bytes, contentType: "text/csv" } } });
    const res = await get(`${agency.urls.files}/msti.csv`);
    expect(new Uint8Array(await res.arrayBuffer())).toEqual(bytes);
    expect((await get(`${agency.urls.files}/other.csv`)).status).toBe(404);
  });
});
