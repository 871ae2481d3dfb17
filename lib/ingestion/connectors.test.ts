import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { afterEach, beforeEach, describe, expect, it } from "vitest";
import {
  ACCEPT_BY_FORMAT,
  ConnectorError,
  fetchRelease,
  readWorldBankPageHeader,
  type Fetcher,
} from "@/lib/ingestion/connectors";
import { FetchError } from "@/lib/ingestion/http";
import { parseSourceDefinition, type SourceDefinitionInput } from "@/lib/ingestion/sources";
import { startFakeAgency, type FakeAgency } from "@/test/fixtures/fake-agency";

async function rejection<E extends Error>(p: Promise<unknown>, type: new (...args: never[]) => E): Promise<E> {
  try {
    await p;
  } catch (e) {
    if (e instanceof type) return e;
    throw e;
  }
  throw new Error(`expected a ${type.name}, the call succeeded`);
}

const json = (body: Uint8Array) => JSON.parse(new TextDecoder().decode(body));

let agency: FakeAgency;
let started: FakeAgency | null = null;
const start = async (options?: Parameters<typeof startFakeAgency>[0]) => {
  agency = started = await startFakeAgency(options);
};
afterEach(async () => {
  await started?.close();
  started = null;
});

function worldBankDef(overrides: Partial<SourceDefinitionInput> = {}) {
  return parseSourceDefinition({
    name: "wb-researchers",
    title: "Researchers per million",
    kind: "worldbank",
    format: "worldbank-json",
    baseUrl: agency.urls.worldbank,
    urlTemplate: "{base}/country/{codes}/indicator/{indicator}?format=json&per_page={per_page}&page={page}&date={date}",
    params: { codes: "all" },
    paging: { perPage: 2, maxPages: 10 },
    queries: [{ indicator: "SP.POP.SCIE.RD.P6", concept: "researchers_per_million", unit: "per million people" }],
    ...overrides,
  });
}

function sdmxDef(format: "sdmx-json" | "sdmx-csv", overrides: Partial<SourceDefinitionInput> = {}) {
  return parseSourceDefinition({
    name: "fake-sdmx",
    title: "Fake SDMX flow",
    kind: "sdmx",
    format,
    baseUrl: agency.urls.sdmx,
    urlTemplate: "{base}/data/{agency},{flow},{version}/{key}?startPeriod={startPeriod}",
    params: { agency: "TEST", flow: "DF_RD", version: "1.0" },
    retries: 1,
    queries: [
      { key: "A.FRA+DEU.RSE", concept: "researchers_fte", unit: "full-time equivalent" },
      { key: "A.GRC.RSE", concept: "researchers_fte", unit: "full-time equivalent" },
    ],
    ...overrides,
  });
}

describe("fetchRelease: World Bank paging", () => {
  beforeEach(async () => {
    await start({ worldBankPerPageAsString: true });
  });

  it("reads page 1, then pages 2..pages, with per_page arriving as a string", async () => {
    const release = await fetchRelease(worldBankDef());
    expect(release.source).toBe("wb-researchers");
    expect(release.payloads.map((p) => p.page)).toEqual([1, 2, 3]);
    expect(agency.requests.map((r) => [r.searchParams.get("page"), r.searchParams.get("per_page")])).toEqual([
      ["1", "2"],
      ["2", "2"],
      ["3", "2"],
    ]);
    for (const p of release.payloads) {
      const [head, rows] = json(p.body);
      expect(head.per_page).toBe("2");
      expect(rows).toHaveLength(2);
      expect(p.queryId).toBe("SP.POP.SCIE.RD.P6");
      expect(p.notModified).toBe(false);
    }
    expect(release.payloads.flatMap((p) => json(p.body)[1].map((r: { countryiso3code: string }) => r.countryiso3code))).toEqual([
      "DEU", "DEU", "FRA", "FRA", "GRC", "GRC",
    ]);
    expect(agency.requests[0]?.headers.accept).toBe("application/json");
    expect(release.allNotModified).toBe(false);
    expect(Object.keys(release.validators)).toEqual(release.payloads.map((p) => p.url));
  });

  it("fails with PAGING_INCONSISTENT when a new release appears between pages", async () => {
    // The hook runs before the fake answers: publishing on page 2's arrival means page 1 came from
    // the old release and page 2 from the new one.
    agency.onRequest = (r) => {
      if (r.searchParams.get("page") === "2") {
        agency.publish({
          observations: [
            ...agency.release.observations,
            { series: "SP.POP.SCIE.RD.P6", economy: "JPN", period: "2021", value: 5500 },
          ],
        });
      }
    };
    const err = await rejection(fetchRelease(worldBankDef()), ConnectorError);
    expect(err.code).toBe("PAGING_INCONSISTENT");
    expect(err.message).toContain("page 1 announced 3 pages, page 2 announces 4");
    expect(agency.requests).toHaveLength(2); // stopped at once, page 3 never asked
  });

  it("fails with PAGING_INCONSISTENT when the total changes but the page count does not", async () => {
    agency.onRequest = (r) => {
      if (r.searchParams.get("page") === "2") {
        agency.publish({ observations: agency.release.observations.filter((o) => !(o.economy === "GRC" && o.period === "2021")) });
      }
    };
    const err = await rejection(fetchRelease(worldBankDef()), ConnectorError);
    expect(err.code).toBe("PAGING_INCONSISTENT");
    expect(err.message).toContain("page 1 announced 6 rows, page 2 announces 5");
  });

  it("refuses more pages than paging.maxPages before fetching them", async () => {
    const err = await rejection(fetchRelease(worldBankDef({ paging: { perPage: 2, maxPages: 2 } })), ConnectorError);
    expect(err.code).toBe("PAGING_LIMIT");
    expect(agency.requests).toHaveLength(1);
  });

  it("returns one payload when the query has no rows (pages 0, rows null)", async () => {
    const release = await fetchRelease(worldBankDef({ params: { codes: "all", date: "1990:1991" } }));
    expect(release.payloads).toHaveLength(1);
    expect(json(release.payloads[0]!.body)).toEqual([
      { page: 1, pages: 0, per_page: "2", total: 0, lastupdated: "2026-01-15" },
      null,
    ]);
    expect(agency.requests[0]?.searchParams.get("date")).toBe("1990:1991");
  });

  it("reports the API's message answer as API_MESSAGE", async () => {
    const def = worldBankDef({ queries: [{ indicator: "NO.SUCH.CODE", concept: "population", unit: "persons" }] });
    const err = await rejection(fetchRelease(def), ConnectorError);
    expect(err.code).toBe("API_MESSAGE");
    expect(err.message).toContain("175 Invalid format The indicator was not found");
  });

  it("reports a malformed page as PAYLOAD_INVALID", async () => {
    agency.inject({ kind: "invalid" });
    const err = await rejection(fetchRelease(worldBankDef()), ConnectorError);
    expect(err.code).toBe("PAYLOAD_INVALID");
    expect(err.url).toContain("page=1");
  });

  it("asks page 1 conditionally and stops at 304; after a new release it reads every page in full", async () => {
    const first = await fetchRelease(worldBankDef());
    const second = await fetchRelease(worldBankDef(), { previous: first.validators });
    expect(second.allNotModified).toBe(true);
    expect(second.payloads).toHaveLength(1);
    expect(second.payloads[0]?.body.byteLength).toBe(0);
    expect(agency.requests).toHaveLength(4);
    expect(agency.requests[3]?.headers["if-none-match"]).toBe(first.payloads[0]?.etag);
    expect(agency.requests[3]?.status).toBe(304);

    agency.publish({});
    const third = await fetchRelease(worldBankDef(), { previous: first.validators });
    expect(third.allNotModified).toBe(false);
    expect(third.payloads.map((p) => [p.page, p.status])).toEqual([
      [1, 200],
      [2, 200],
      [3, 200],
    ]);
    // pages 2 and 3 are asked without validators: a changed page 1 means every page is needed
    expect(agency.requests.slice(5).map((r) => r.headers["if-none-match"])).toEqual([undefined, undefined]);
  });
});

describe("fetchRelease: SDMX content negotiation and JSON-stat", () => {
  beforeEach(async () => {
    await start();
  });

  it("asks SDMX-JSON with the SDMX 2.1 media type, one payload per query", async () => {
    const release = await fetchRelease(sdmxDef("sdmx-json"));
    expect(agency.requests.map((r) => r.headers.accept)).toEqual([
      "application/vnd.sdmx.data+json;version=1.0.0",
      "application/vnd.sdmx.data+json;version=1.0.0",
    ]);
    expect(agency.requests.map((r) => r.path)).toEqual([
      "/sdmx/rest/data/TEST,DF_RD,1.0/A.FRA+DEU.RSE",
      "/sdmx/rest/data/TEST,DF_RD,1.0/A.GRC.RSE",
    ]);
    expect(release.payloads.map((p) => [p.queryId, p.page, p.contentType])).toEqual([
      ["A.FRA+DEU.RSE", null, "application/vnd.sdmx.data+json; charset=utf-8; version=1.0.0"],
      ["A.GRC.RSE", null, "application/vnd.sdmx.data+json; charset=utf-8; version=1.0.0"],
    ]);
    const areas = json(release.payloads[0]!.body).structure.dimensions.series[1].values.map((v: { id: string }) => v.id);
    expect(areas).toEqual(["DEU", "FRA"]);
  });

  it("asks SDMX-CSV with the SDMX 2.1 media type", async () => {
    const release = await fetchRelease(sdmxDef("sdmx-csv", { params: { agency: "TEST", flow: "DF_RD", version: "1.0", startPeriod: "2021" } }));
    expect(agency.requests[0]?.headers.accept).toBe(ACCEPT_BY_FORMAT["sdmx-csv"]);
    expect(agency.requests[0]?.searchParams.get("startPeriod")).toBe("2021");
    expect(new TextDecoder().decode(release.payloads[1]!.body)).toBe(
      "DATAFLOW,FREQ,REF_AREA,MEASURE,TIME_PERIOD,OBS_VALUE,OBS_STATUS,UNIT_MEASURE\r\n" +
        "TEST:DF_RD(1.0),A,GRC,RSE,2021,35000,,FTE\r\n",
    );
  });

  it("retries under the definition's policy with the injected sleep, honouring Retry-After", async () => {
    agency.inject({ kind: "status", status: 503, retryAfter: 2 }, { route: "sdmx" });
    const delays: number[] = [];
    const release = await fetchRelease(sdmxDef("sdmx-json"), { policy: { sleep: async (ms) => void delays.push(ms) } });
    expect(delays).toEqual([2000]);
    expect(release.payloads.map((p) => p.attempts)).toEqual([2, 1]);
  });

  it("lets a FetchError through, e.g. 404 for an SDMX query without results", async () => {
    const def = sdmxDef("sdmx-json", { queries: [{ key: "A.JPN.RSE", concept: "researchers_fte", unit: "FTE" }] });
    const err = await rejection(fetchRelease(def), FetchError);
    expect(err.code).toBe("HTTP_STATUS");
    expect(err.status).toBe(404);
    expect(err.attempts).toBe(1);
  });

  it("sends a JSON-stat source's filters as Eurostat-style parameters", async () => {
    const def = parseSourceDefinition({
      name: "fake-eurostat",
      title: "Fake Eurostat",
      kind: "jsonstat",
      format: "jsonstat",
      baseUrl: agency.urls.jsonstat,
      urlTemplate: "{base}/data/{dataset}?format=JSON&lang=EN",
      queries: [{ dataset: "rd_p_persocc", concept: "researchers_fte", unit: "FTE", filters: { geo: ["EL", "FR"], unit: "FTE" } }],
      economyCodeMap: { EL: "GRC" },
    });
    const release = await fetchRelease(def);
    expect(agency.requests[0]?.url).toBe("/eurostat/statistics/1.0/data/rd_p_persocc?format=JSON&lang=EN&geo=EL&geo=FR&unit=FTE");
    const ds = json(release.payloads[0]!.body);
    expect(Object.keys(ds.dimension.geo.category.index)).toEqual(["EL", "FR"]);
    expect(release.payloads[0]?.contentType).toBe("application/json; charset=utf-8");
  });
});

describe("fetchRelease: API keys, demo and local files", () => {
  beforeEach(async () => {
    await start();
  });

  it("sends the key from the named environment variable in the named header", async () => {
    const def = sdmxDef("sdmx-json", { apiKeyEnv: "FAKE_AGENCY_KEY", apiKeyHeader: "x-api-key" });
    await fetchRelease(def, { env: { FAKE_AGENCY_KEY: "s3cr3t" } });
    expect(agency.requests.map((r) => r.headers["x-api-key"])).toEqual(["s3cr3t", "s3cr3t"]);
  });

  it("sends the key as a query parameter but never records it in payload URLs or validators", async () => {
    const def = sdmxDef("sdmx-json", { apiKeyEnv: "FAKE_AGENCY_KEY", apiKeyParam: "subscription" });
    const release = await fetchRelease(def, { env: { FAKE_AGENCY_KEY: "s3cr3t" } });
    expect(agency.requests[0]?.searchParams.get("subscription")).toBe("s3cr3t");
    expect(release.payloads.every((p) => !p.url.includes("s3cr3t"))).toBe(true);
    expect(Object.keys(release.validators).every((u) => !u.includes("s3cr3t"))).toBe(true);
  });

  it("hides a key sent as a query parameter in error messages", async () => {
    agency.inject({ kind: "status", status: 500 }, { times: Infinity });
    const def = sdmxDef("sdmx-json", { apiKeyEnv: "FAKE_AGENCY_KEY", apiKeyParam: "subscription", retries: 0 });
    const err = await rejection(fetchRelease(def, { env: { FAKE_AGENCY_KEY: "s3cr3t" } }), FetchError);
    expect(err.message).toContain("subscription=***");
    expect(err.message).not.toContain("s3cr3t");
  });

  it("fails with MISSING_API_KEY before any request when the variable is unset", async () => {
    const def = sdmxDef("sdmx-json", { apiKeyEnv: "FAKE_AGENCY_KEY", apiKeyHeader: "x-api-key" });
    const err = await rejection(fetchRelease(def, { env: {} }), ConnectorError);
    expect(err.code).toBe("MISSING_API_KEY");
    expect(err.message).toBe("Source fake-sdmx needs an API key in the environment variable FAKE_AGENCY_KEY, which is not set.");
    expect(agency.requests).toHaveLength(0);
  });

  it("refuses to fetch a demo source", async () => {
    const demo = parseSourceDefinition({
      name: "demo",
      title: "Demo",
      kind: "demo",
      format: "csv",
      queries: [{ id: "r", concept: "researchers_fte", unit: "FTE" }],
    });
    expect((await rejection(fetchRelease(demo), ConnectorError)).code).toBe("NOT_FETCHABLE");
  });

  it("reads a file: URL, and reports it not modified while its modification time stays", async () => {
    const dir = mkdtempSync(path.join(tmpdir(), "ideafront-connectors-"));
    try {
      const file = path.join(dir, "researchers.csv");
      writeFileSync(file, "economy,period,value\nXAA,2020,1\n");
      const def = parseSourceDefinition({
        name: "local-file",
        title: "Local file",
        kind: "file",
        format: "csv",
        baseUrl: pathToFileURL(dir).href,
        urlTemplate: "{base}/{dataset}",
        queries: [{ dataset: "researchers.csv", concept: "researchers_fte", unit: "FTE", economyDimension: "economy" }],
      });
      const first = await fetchRelease(def);
      expect(new TextDecoder().decode(first.payloads[0]!.body)).toBe("economy,period,value\nXAA,2020,1\n");
      const second = await fetchRelease(def, { previous: first.validators });
      expect(second.allNotModified).toBe(true);
      const tooSmall = parseSourceDefinition({ ...def, maxBytes: 10 });
      expect((await rejection(fetchRelease(tooSmall), FetchError)).code).toBe("TOO_LARGE");
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe("fetchRelease with an injected fetcher", () => {
  it("fails with PAGING_INCONSISTENT when the pages hold fewer rows than the header announced", async () => {
    const page = (n: number, rows: number) =>
      new TextEncoder().encode(JSON.stringify([{ page: n, pages: 2, per_page: "2", total: 4 }, Array(rows).fill({})]));
    const asked: string[] = [];
    const fetcher: Fetcher = async (url) => {
      asked.push(url);
      const n = Number(new URL(url).searchParams.get("page"));
      return {
        status: 200,
        headers: {},
        body: page(n, n === 1 ? 2 : 1),
        contentType: "application/json",
        etag: null,
        lastModified: null,
        notModified: false,
        attempts: 1,
        url,
      };
    };
    const def = parseSourceDefinition({
      name: "wb",
      title: "WB",
      kind: "worldbank",
      format: "worldbank-json",
      baseUrl: "https://api.example.org/v2",
      urlTemplate: "{base}/country/all/indicator/{indicator}?format=json&per_page={per_page}&page={page}",
      paging: { perPage: 2 },
      queries: [{ indicator: "SP.POP.TOTL", concept: "population", unit: "persons" }],
    });
    const err = await rejection(fetchRelease(def, { fetcher }), ConnectorError);
    expect(err.code).toBe("PAGING_INCONSISTENT");
    expect(err.message).toContain("the pages hold 3 rows, the header announced 4");
    expect(asked).toEqual([
      "https://api.example.org/v2/country/all/indicator/SP.POP.TOTL?format=json&per_page=2&page=1",
      "https://api.example.org/v2/country/all/indicator/SP.POP.TOTL?format=json&per_page=2&page=2",
    ]);
  });
});

describe("readWorldBankPageHeader", () => {
  const enc = (v: unknown) => new TextEncoder().encode(JSON.stringify(v));
  it("reads numbers given as strings and counts the rows", () => {
    const h = readWorldBankPageHeader(enc([{ page: "2", pages: 3, per_page: "50", total: "120" }, [{}, {}]]), "s", "u");
    expect(h).toEqual({ page: 2, pages: 3, perPage: 50, total: 120, rows: 2 });
  });
  it("refuses fractional or missing header numbers and a non-list second element", () => {
    const codeOf = (v: unknown) => {
      try {
        readWorldBankPageHeader(enc(v), "s", "u");
      } catch (e) {
        return (e as ConnectorError).code;
      }
      return "accepted";
    };
    expect(codeOf([{ page: 1, pages: 1.5, per_page: 50, total: 1 }, []])).toBe("PAYLOAD_INVALID");
    expect(codeOf([{ page: 1, pages: 1, total: 1 }, []])).toBe("PAYLOAD_INVALID");
    expect(codeOf([{ page: 1, pages: 1, per_page: 50, total: 1 }, {}])).toBe("PAYLOAD_INVALID");
    expect(codeOf({ page: 1 })).toBe("PAYLOAD_INVALID");
  });
});
