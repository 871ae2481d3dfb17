import { existsSync, readdirSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { CATALOG, CATALOG_INPUTS, findCatalogSource, getCatalogSourceOrThrow } from "@/lib/ingestion/catalog";
import { fetchRelease } from "@/lib/ingestion/connectors";
import { buildRequestUrls, parseSourceDefinition, SourceDefinitionError, type SourceDefinition } from "@/lib/ingestion/sources";
import { startFakeAgency } from "@/test/fixtures/fake-agency";

const WDI = path.resolve(import.meta.dirname, "../../../shared/data/wdi");

const WORLD_BANK_CODES = ["SP.POP.SCIE.RD.P6", "SP.POP.TOTL", "GB.XPD.RSDV.GD.ZS", "IP.PAT.RESD"];

/** The catalog definition `name` with another base URL (a fake agency's route). */
function rebased(name: string, baseUrl: string, extra: Record<string, unknown> = {}): SourceDefinition {
  const input = CATALOG_INPUTS.find((d) => d.name === name);
  if (!input) throw new Error(`no catalog input ${name}`);
  return parseSourceDefinition({ ...input, baseUrl, ...extra });
}

describe("catalog", () => {
  it("holds valid definitions with unique names, every one disabled", () => {
    expect(CATALOG.map((d) => d.name)).toEqual([
      "worldbank-researchers-per-million",
      "worldbank-population",
      "worldbank-rd-share-gdp",
      "worldbank-patents-residents",
      "eurostat-researchers-jsonstat",
      "eurostat-researchers-sdmx",
      "oecd-msti",
      "demo",
    ]);
    expect(CATALOG.filter((d) => d.enabled)).toEqual([]);
    expect(CATALOG.every((d) => d.notes.length > 0)).toBe(true);
  });

  it("says in every public definition what is verified and what is not", () => {
    for (const d of CATALOG.filter((x) => x.kind !== "demo")) {
      expect(d.notes, d.name).toContain("Verified:");
      expect(d.notes.includes("Not verified") || d.unverified.length > 0, d.name).toBe(true);
    }
  });

  it("carries the four World Bank indicators, with their concepts", () => {
    const wb = CATALOG.filter((d) => d.kind === "worldbank");
    expect(wb.map((d) => [d.queries[0]?.indicator, d.queries[0]?.concept])).toEqual([
      ["SP.POP.SCIE.RD.P6", "researchers_per_million"],
      ["SP.POP.TOTL", "population"],
      ["GB.XPD.RSDV.GD.ZS", "rd_share_gdp"],
      ["IP.PAT.RESD", "patents"],
    ]);
  });

  it("names World Bank indicators that exist in the real WDI vintages", (ctx) => {
    if (!existsSync(WDI)) ctx.skip(`reference data absent: ${WDI} (../shared/data/wdi)`);
    const folders = readdirSync(WDI).map((f) => f.toLowerCase());
    for (const code of WORLD_BANK_CODES) {
      expect(folders, code).toContain(code.toLowerCase()); // World Bank WDI, one folder per indicator (data/README.md)
    }
  });

  it("builds the documented request URLs", () => {
    const url = (name: string) => buildRequestUrls(getCatalogSourceOrThrow(name))[0]?.url;
    // World Bank indicators API v2: /country/{codes}/indicator/{code}?format=json&per_page=&page= (DOMAIN.md section 6)
    expect(url("worldbank-population")).toBe(
      "https://api.worldbank.org/v2/country/all/indicator/SP.POP.TOTL?format=json&per_page=1000&page=1",
    );
    // Eurostat statistics API, JSON-stat: /data/{dataset}?format=JSON (DOMAIN.md section 6)
    expect(url("eurostat-researchers-jsonstat")).toBe(
      "https://ec.europa.eu/eurostat/api/dissemination/statistics/1.0/data/rd_p_persocc?format=JSON&lang=EN&prof_pg=RSE&sectperf=TOTAL&sex=T&unit=FTE",
    );
    // SDMX 2.1 REST: {base}/data/{agency},{flow},{version}/{key} (DOMAIN.md section 6)
    expect(url("oecd-msti")).toBe(
      "https://sdmx.oecd.org/public/rest/data/OECD.STI.STP,DSD_MSTI@DF_MSTI,latest/all?dimensionAtObservation=AllDimensions",
    );
    expect(url("eurostat-researchers-sdmx")).toBe(
      "https://ec.europa.eu/eurostat/api/dissemination/sdmx/2.1/data/rd_p_persocc/all?format=SDMX-CSV",
    );
  });

  it("maps Eurostat geo codes to ISO alpha-3", () => {
    expect(getCatalogSourceOrThrow("eurostat-researchers-jsonstat").economyCodeMap).toEqual({ EL: "GRC", UK: "GBR" });
  });

  it("keeps the OECD flow from being enabled until its key layout is looked up", () => {
    const oecd = getCatalogSourceOrThrow("oecd-msti");
    expect(oecd.unverified.some((u) => u.includes("key layout"))).toBe(true);
    const input = CATALOG_INPUTS.find((d) => d.name === "oecd-msti");
    let issues: readonly { path: string }[] = [];
    try {
      parseSourceDefinition({ ...input, enabled: true });
    } catch (e) {
      if (e instanceof SourceDefinitionError) issues = e.issues;
    }
    expect(issues.map((i) => i.path)).toEqual(["enabled"]);
  });

  it("has a demo placeholder for invented data that is never fetched", () => {
    const demo = getCatalogSourceOrThrow("demo");
    expect(demo.kind).toBe("demo");
    expect(demo.notes).toContain("invented");
    expect(demo.queries.map((q) => q.economyDimension)).toEqual(["economy", "economy", "economy"]);
  });

  it("finds sources by name", () => {
    expect(findCatalogSource("worldbank-population")?.queries[0]?.indicator).toBe("SP.POP.TOTL");
    expect(findCatalogSource("nope")).toBeNull();
    expect(() => getCatalogSourceOrThrow("nope")).toThrow(/^No catalog source nope; known: worldbank-researchers-per-million, /);
  });
});

describe("catalog definitions against the fake agency", () => {
  it("fetches each World Bank definition through its own URL template", async () => {
    const agency = await startFakeAgency({ worldBankPerPageAsString: true });
    try {
      agency.publish({
        observations: [
          ...agency.release.observations,
          { series: "GB.XPD.RSDV.GD.ZS", economy: "FRA", period: "2021", value: 2.5 },
          { series: "IP.PAT.RESD", economy: "FRA", period: "2021", value: 100 },
        ],
      });
      for (const name of CATALOG.filter((d) => d.kind === "worldbank").map((d) => d.name)) {
        const release = await fetchRelease(rebased(name, agency.urls.worldbank));
        expect(release.payloads, name).toHaveLength(1);
        const [head] = JSON.parse(new TextDecoder().decode(release.payloads[0]?.body));
        expect(head.per_page, name).toBe("1000");
      }
      expect(agency.requests.map((r) => r.path.split("/").pop())).toEqual(WORLD_BANK_CODES);
    } finally {
      await agency.close();
    }
  });

  it("fetches the OECD flow reference and the Eurostat SDMX definition from an SDMX 2.1 server", async () => {
    const oecd = await startFakeAgency({ sdmxFlow: { agency: "OECD.STI.STP", id: "DSD_MSTI@DF_MSTI", version: "1.0" } });
    const estat = await startFakeAgency({ sdmxFlow: { agency: "ESTAT", id: "rd_p_persocc", version: "1.0" } });
    try {
      const a = await fetchRelease(rebased("oecd-msti", oecd.urls.sdmx));
      expect(oecd.requests[0]?.headers.accept).toBe("application/vnd.sdmx.data+json;version=1.0.0");
      expect(JSON.parse(new TextDecoder().decode(a.payloads[0]?.body)).dataSets[0].observations).toBeDefined();
      const b = await fetchRelease(rebased("eurostat-researchers-sdmx", estat.urls.sdmx));
      expect(new TextDecoder().decode(b.payloads[0]?.body).split("\r\n")[1]).toMatch(/^ESTAT:rd_p_persocc\(1\.0\),A,/);
    } finally {
      await oecd.close();
      await estat.close();
    }
  });
});
