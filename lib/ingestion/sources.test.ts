import { describe, expect, it } from "vitest";
import {
  buildRequestUrls,
  DEFAULT_SCHEDULE,
  mapEconomyCode,
  matchesFilters,
  parseSourceDefinition,
  SourceDefinitionError,
  type SourceDefinitionInput,
} from "@/lib/ingestion/sources";

const worldBank: SourceDefinitionInput = {
  name: "wb-population",
  title: "World Bank population",
  kind: "worldbank",
  format: "worldbank-json",
  baseUrl: "https://api.example.org/v2/",
  urlTemplate: "{base}/country/{codes}/indicator/{indicator}?format=json&per_page={per_page}&page={page}&date={date}",
  params: { codes: "all" },
  queries: [{ indicator: "SP.POP.TOTL", concept: "population", unit: "persons" }],
};

const sdmx: SourceDefinitionInput = {
  name: "sdmx-flow",
  title: "An SDMX flow",
  kind: "sdmx",
  format: "sdmx-json",
  baseUrl: "https://sdmx.example.org/rest",
  urlTemplate: "{base}/data/{agency},{flow},{version}/{key}?startPeriod={startPeriod}&endPeriod={endPeriod}",
  params: { agency: "AG.ENCY", flow: "DSD_X@DF_X", version: "1.0", startPeriod: "1995" },
  queries: [{ key: "A.FRA+DEU.RSE", concept: "researchers_fte", unit: "persons", scale: 1e3 }],
};

function issuesOf(input: unknown): { path: string; message: string }[] {
  try {
    parseSourceDefinition(input);
  } catch (e) {
    if (e instanceof SourceDefinitionError) return [...e.issues];
    throw e;
  }
  throw new Error("expected the definition to be refused");
}

describe("parseSourceDefinition", () => {
  it("fills the defaults: disabled, daily schedule in UTC, limits, query id and economy dimension", () => {
    const def = parseSourceDefinition(worldBank);
    expect(def.enabled).toBe(false);
    expect(def.schedule).toBe(DEFAULT_SCHEDULE);
    expect(def.schedule).toBe("0 6 * * *");
    expect(def.timezone).toBe("UTC");
    expect(def.timeoutMs).toBe(30_000);
    expect(def.retries).toBe(3);
    expect(def.maxBytes).toBe(50 * 1024 * 1024);
    expect(def.paging).toEqual({ perPage: 1000, maxPages: 200 });
    expect(def.queries[0]).toMatchObject({ id: "SP.POP.TOTL", scale: 1, economyDimension: "country", filters: {} });
    expect(parseSourceDefinition(sdmx).queries[0]).toMatchObject({ id: "A.FRA+DEU.RSE", economyDimension: "REF_AREA" });
  });

  it("names the field path of each problem", () => {
    const issues = issuesOf({
      ...worldBank,
      name: "Bad Name",
      queries: [{ indicator: "X", concept: "gdp", unit: "persons" }, { concept: "population", unit: "" }],
    });
    const paths = issues.map((i) => i.path);
    expect(paths).toEqual(expect.arrayContaining(["name", "queries[0].concept", "queries[1].unit"]));
    expect(issues.find((i) => i.path === "name")?.message).toContain("slug");
  });

  it("puts the paths in the error message", () => {
    expect(() => parseSourceDefinition({ ...sdmx, format: "jsonstat" })).toThrow(
      /^Source definition "sdmx-flow" is invalid: format format "jsonstat" does not fit kind "sdmx"/,
    );
  });

  it("refuses unknown fields, so a literal apiKey cannot slip into a definition", () => {
    expect(issuesOf({ ...worldBank, apiKey: "abc123" })).toEqual([
      expect.objectContaining({ path: "", message: expect.stringContaining("apiKey") }),
    ]);
  });

  it("checks the cross-field rules", () => {
    expect(issuesOf({ ...sdmx, queries: [{ concept: "population", unit: "persons" }] }).map((i) => i.path)).toContain(
      "queries[0].key",
    );
    expect(issuesOf({ ...worldBank, urlTemplate: "{base}/indicator/{indicator}?format=json" })).toEqual([
      { path: "urlTemplate", message: "must contain {page}: World Bank responses are paged" },
      { path: "urlTemplate", message: "must contain {per_page}: World Bank responses are paged" },
    ]);
    expect(issuesOf({ ...sdmx, baseUrl: undefined }).map((i) => i.path)).toEqual(["baseUrl"]);
    expect(issuesOf({ ...sdmx, apiKeyEnv: "SDMX_KEY" })).toEqual([
      { path: "apiKeyEnv", message: "needs exactly one of apiKeyHeader or apiKeyParam to say how the key is sent" },
    ]);
    expect(issuesOf({ ...sdmx, apiKeyEnv: "sdmx-key", apiKeyHeader: "x-key" }).map((i) => i.path)).toEqual(["apiKeyEnv"]);
    expect(issuesOf({ ...sdmx, enabled: true, unverified: ["key layout"] })).toEqual([
      { path: "enabled", message: "cannot be true while unverified items remain: key layout" },
    ]);
    expect(issuesOf({ ...sdmx, queries: [...(sdmx.queries as object[]), ...(sdmx.queries as object[])] })).toEqual([
      { path: "queries[1].id", message: '"A.FRA+DEU.RSE" repeats query 0; give each query its own id' },
    ]);
    expect(
      issuesOf({ ...sdmx, kind: "file", format: "csv", queries: [{ id: "f", key: "all", concept: "population", unit: "persons" }] }),
    ).toEqual([{ path: "queries[0].economyDimension", message: 'is required for kind "file" (no default)' }]);
  });

  it("refuses a path placeholder without a value, naming the query and the placeholder", () => {
    const { agency: _dropped, ...params } = sdmx.params as Record<string, string>;
    expect(issuesOf({ ...sdmx, params })).toEqual([
      { path: "queries[0]", message: "has no value for placeholder {agency} of urlTemplate (set it in params)" },
    ]);
  });

  it("validates schedule, timezone, economy map and base URL", () => {
    const issues = issuesOf({
      ...sdmx,
      schedule: "61 * * * *",
      timezone: "Mars/Olympus",
      economyCodeMap: { EL: "gr" },
      baseUrl: "https://user:pw@sdmx.example.org/rest",
    });
    expect(issues.map((i) => i.path).sort()).toEqual(["baseUrl", "economyCodeMap.EL", "schedule", "timezone"]);
    expect(parseSourceDefinition({ ...sdmx, schedule: "0 0 6 * * 1", timezone: "Europe/Paris" }).timezone).toBe(
      "Europe/Paris",
    );
  });
});

describe("buildRequestUrls", () => {
  it("fills a World Bank template, leaving out the empty optional date parameter", () => {
    const def = parseSourceDefinition(worldBank);
    // World Bank API v2 pattern, DOMAIN.md section 6
    expect(buildRequestUrls(def).map((r) => [r.url, r.page])).toEqual([
      ["https://api.example.org/v2/country/all/indicator/SP.POP.TOTL?format=json&per_page=1000&page=1", 1],
    ]);
    const dated = parseSourceDefinition({ ...worldBank, params: { codes: "FRA;DEU", date: "1995:2024" }, paging: { perPage: 50 } });
    expect(buildRequestUrls(dated, { page: 3 })[0]?.url).toBe(
      "https://api.example.org/v2/country/FRA;DEU/indicator/SP.POP.TOTL?format=json&per_page=50&page=3&date=1995:2024",
    );
  });

  it("fills an SDMX 2.1 data query, keeping the characters SDMX uses in paths", () => {
    const [r] = buildRequestUrls(parseSourceDefinition(sdmx));
    // SDMX 2.1 REST: {base}/data/{agency},{flow},{version}/{key}?startPeriod=
    expect(r?.url).toBe("https://sdmx.example.org/rest/data/AG.ENCY,DSD_X@DF_X,1.0/A.FRA+DEU.RSE?startPeriod=1995");
    expect(r?.page).toBeNull();
    expect(r?.queryIndex).toBe(0);
  });

  it("percent-encodes values that would break the URL, and query values holding & = + #", () => {
    const def = parseSourceDefinition({
      ...sdmx,
      params: { ...sdmx.params, startPeriod: "a&b=c+d#e", version: "1 0/2" },
    });
    expect(buildRequestUrls(def)[0]?.url).toBe(
      "https://sdmx.example.org/rest/data/AG.ENCY,DSD_X@DF_X,1%200%2F2/A.FRA+DEU.RSE?startPeriod=a%26b%3Dc%2Bd%23e",
    );
  });

  it("sends filters as query parameters for JSON-stat sources, sorted and repeated for lists", () => {
    const def = parseSourceDefinition({
      name: "es",
      title: "Eurostat",
      kind: "jsonstat",
      format: "jsonstat",
      baseUrl: "https://stats.example.org/1.0",
      urlTemplate: "{base}/data/{dataset}?format=JSON",
      queries: [
        { dataset: "rd_p_persocc", concept: "researchers_fte", unit: "FTE", filters: { unit: "FTE", geo: ["FR", "EL"] } },
      ],
    });
    expect(buildRequestUrls(def)[0]?.url).toBe(
      "https://stats.example.org/1.0/data/rd_p_persocc?format=JSON&geo=FR&geo=EL&unit=FTE",
    );
    // SDMX 2.1 selects series by key, not by parameters: filters stay out of the URL
    const filtered = parseSourceDefinition({
      ...sdmx,
      queries: [{ key: "A..RSE", concept: "researchers_fte", unit: "persons", filters: { UNIT: "FTE" } }],
    });
    expect(buildRequestUrls(filtered)[0]?.url).toBe(
      "https://sdmx.example.org/rest/data/AG.ENCY,DSD_X@DF_X,1.0/A..RSE?startPeriod=1995",
    );
  });

  it("takes a query's params before the definition's", () => {
    const def = parseSourceDefinition({
      ...sdmx,
      queries: [{ key: "A..RSE", concept: "researchers_fte", unit: "persons", params: { startPeriod: "2010" } }],
    });
    expect(buildRequestUrls(def)[0]?.url).toContain("?startPeriod=2010");
  });

  it("refuses page numbers below 1 and demo sources", () => {
    expect(() => buildRequestUrls(parseSourceDefinition(worldBank), { page: 0 })).toThrow("page must be an integer >= 1, got 0");
    const demo = parseSourceDefinition({
      name: "demo",
      title: "Demo",
      kind: "demo",
      format: "csv",
      queries: [{ id: "r", concept: "researchers_fte", unit: "FTE" }],
    });
    expect(() => buildRequestUrls(demo)).toThrow("source demo (kind demo) has no URL to request");
  });
});

describe("mapEconomyCode", () => {
  const def = { economyCodeMap: { EL: "GRC", UK: "GBR" } };
  it("maps through the definition's map, then ISO alpha-3 as is, then ISO alpha-2", () => {
    expect(mapEconomyCode(def, "EL")).toBe("GRC"); // Eurostat country codes: Greece is EL
    expect(mapEconomyCode(def, "UK")).toBe("GBR");
    expect(mapEconomyCode(def, "FR")).toBe("FRA"); // ISO 3166-1: FR = FRA
    expect(mapEconomyCode(def, "de")).toBe("DEU");
    expect(mapEconomyCode(def, "WLD")).toBe("WLD"); // World Bank aggregate kept as published
    expect(mapEconomyCode(def, "EU27_2020")).toBeNull();
    expect(mapEconomyCode(def, "QQ")).toBeNull();
  });
});

describe("matchesFilters", () => {
  it("keeps observations that carry every filtered code", () => {
    const q = { filters: { unit: "FTE", geo: ["FR", "EL"] } };
    expect(matchesFilters(q, { unit: "FTE", geo: "EL", sex: "T" })).toBe(true);
    expect(matchesFilters(q, { unit: "HC", geo: "EL" })).toBe(false);
    expect(matchesFilters(q, { unit: "FTE" })).toBe(false);
    expect(matchesFilters({ filters: {} }, {})).toBe(true);
  });
});
