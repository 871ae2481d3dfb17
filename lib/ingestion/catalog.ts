/**
 * Ready source definitions for the public statistics APIs the tool knows, all disabled: an
 * operator enables one after checking it against the live API (these machines cannot reach it).
 * Each definition's notes say what has been checked and what has not; `unverified` lists the
 * facts that must be looked up first, and a source cannot be enabled while any remain.
 *
 * URL patterns follow DOMAIN.md section 6 (from the agencies' API documentation):
 * - World Bank indicators API v2: {base}/country/{codes}/indicator/{code}?format=json&per_page=&page=&date=
 * - Eurostat statistics API (JSON-stat 2.0): {base}/data/{dataset}?format=JSON, filters as parameters
 * - SDMX 2.1 REST (ISO 17369): {base}/data/{agency},{flow},{version}/{key}?startPeriod=
 */
import { parseSourceDefinition, type SourceDefinition, type SourceDefinitionInput } from "@/lib/ingestion/sources";
import type { Concept } from "@/lib/ingestion/types";

const WORLD_BANK_BASE = "https://api.worldbank.org/v2";
const WORLD_BANK_TEMPLATE =
  "{base}/country/{codes}/indicator/{indicator}?format=json&per_page={per_page}&page={page}&date={date}";

const WORLD_BANK_NOTES =
  "Verified: the indicator code and its meaning match the real WDI vintages in ../shared/data/wdi " +
  "(catalog.test.ts), and the response shape [ {page, pages, per_page, total, lastupdated}, rows ] is the " +
  "documented one, replayed by the fake agency in the tests. Not verified against the live host (no " +
  "internet on the build machines): whether api.worldbank.org sends ETag or Last-Modified (without them " +
  "every fetch downloads the indicator in full and the store compares contents), and the largest per_page " +
  "it accepts (1000 chosen). codes=all also returns aggregates (WLD, HIC, EUU...), which keep their codes.";

function worldBank(name: string, indicator: string, title: string, concept: Concept, unit: string): SourceDefinitionInput {
  return {
    name,
    title: `World Bank WDI: ${title} (${indicator})`,
    kind: "worldbank",
    format: "worldbank-json",
    baseUrl: WORLD_BANK_BASE,
    urlTemplate: WORLD_BANK_TEMPLATE,
    params: { codes: "all" },
    paging: { perPage: 1000, maxPages: 100 },
    queries: [{ indicator, concept, unit, scale: 1 }],
    enabled: false,
    notes: WORLD_BANK_NOTES,
  };
}

/** Dimension codes of rd_p_persocc recalled from memory (unverified): researchers, FTE, all sectors, both sexes. */
const EUROSTAT_RESEARCHER_FILTERS = { unit: "FTE", sectperf: "TOTAL", prof_pg: "RSE", sex: "T" };

/** Eurostat geo codes that are not ISO 3166-1 alpha-2 (Eurostat country codes glossary). */
const EUROSTAT_GEO_EXCEPTIONS = { EL: "GRC", UK: "GBR" };

export const CATALOG_INPUTS: readonly SourceDefinitionInput[] = [
  worldBank(
    "worldbank-researchers-per-million",
    "SP.POP.SCIE.RD.P6",
    "Researchers in R&D (per million people)",
    "researchers_per_million",
    "per million people",
  ),
  worldBank("worldbank-population", "SP.POP.TOTL", "Population, total", "population", "persons"),
  worldBank(
    "worldbank-rd-share-gdp",
    "GB.XPD.RSDV.GD.ZS",
    "Research and development expenditure (% of GDP)",
    "rd_share_gdp",
    "percent of GDP",
  ),
  worldBank("worldbank-patents-residents", "IP.PAT.RESD", "Patent applications, residents", "patents", "applications"),
  {
    name: "eurostat-researchers-jsonstat",
    title: "Eurostat: R&D personnel and researchers (rd_p_persocc), JSON-stat 2.0",
    kind: "jsonstat",
    format: "jsonstat",
    baseUrl: "https://ec.europa.eu/eurostat/api/dissemination/statistics/1.0",
    urlTemplate: "{base}/data/{dataset}?format=JSON&lang=EN&sinceTimePeriod={startPeriod}",
    queries: [
      {
        dataset: "rd_p_persocc",
        concept: "researchers_fte",
        unit: "full-time equivalent",
        scale: 1,
        economyDimension: "geo",
        filters: EUROSTAT_RESEARCHER_FILTERS,
      },
    ],
    economyCodeMap: EUROSTAT_GEO_EXCEPTIONS,
    enabled: false,
    unverified: [
      "dimension ids and codes of rd_p_persocc (unit=FTE, sectperf=TOTAL, prof_pg=RSE, sex=T) are from memory: read the dataset's structure first",
      "the time filter parameter name sinceTimePeriod is from memory",
    ],
    notes:
      "Verified: the base URL and ?format=JSON follow the pattern in DOMAIN.md section 6; geo is the economy " +
      "dimension and Greece is EL, the United Kingdom UK (mapped to GRC, GBR; other two-letter codes are ISO " +
      "alpha-2). Aggregates such as EU27_2020 map to no economy. Eurostat keeps only the latest value of each " +
      "observation, so its vintage history exists only as recorded here. Not verified: see unverified.",
  },
  {
    name: "eurostat-researchers-sdmx",
    title: "Eurostat SDMX 2.1: researchers (rd_p_persocc), SDMX-CSV",
    kind: "sdmx",
    format: "sdmx-csv",
    baseUrl: "https://ec.europa.eu/eurostat/api/dissemination/sdmx/2.1",
    urlTemplate: "{base}/data/{flow}/{key}?format=SDMX-CSV&startPeriod={startPeriod}",
    params: { flow: "rd_p_persocc" },
    queries: [
      {
        id: "researchers-fte",
        key: "all",
        concept: "researchers_fte",
        unit: "full-time equivalent",
        scale: 1,
        economyDimension: "geo",
        filters: EUROSTAT_RESEARCHER_FILTERS,
      },
    ],
    economyCodeMap: EUROSTAT_GEO_EXCEPTIONS,
    enabled: false,
    unverified: [
      "key layout of rd_p_persocc (order of its dimensions): look it up at {base}/datastructure/ESTAT/rd_p_persocc before narrowing key=all",
      "dimension ids (geo in lower case) and codes of the filters are from memory",
      "whether the API honours Accept application/vnd.sdmx.data+csv;version=1.0.0 as well as format=SDMX-CSV (from memory)",
    ],
    notes:
      "The Eurostat SDMX 2.1 base (https://ec.europa.eu/eurostat/api/dissemination/sdmx/2.1, DOMAIN.md section 6) " +
      "with the researchers dataset; copy it for other Eurostat flows. key=all asks for the whole dataset and the " +
      "filters are applied after parsing. Verified: only the base URL and the SDMX 2.1 REST query pattern.",
  },
  {
    name: "oecd-msti",
    title: "OECD Main Science and Technology Indicators (SDMX 2.1, OECD.STI.STP,DSD_MSTI@DF_MSTI)",
    kind: "sdmx",
    format: "sdmx-json",
    baseUrl: "https://sdmx.oecd.org/public/rest",
    urlTemplate: "{base}/data/{agency},{flow},{version}/{key}?startPeriod={startPeriod}&dimensionAtObservation=AllDimensions",
    params: { agency: "OECD.STI.STP", flow: "DSD_MSTI@DF_MSTI", version: "latest" },
    queries: [
      {
        id: "researchers-per-thousand-employed",
        key: "all",
        concept: "researchers_per_thousand_employed",
        unit: "per thousand employed",
        scale: 1,
        economyDimension: "REF_AREA",
      },
    ],
    enabled: false,
    unverified: [
      "the key layout of DSD_MSTI@DF_MSTI is unverified: look up the structure ({base}/dataflow/OECD.STI.STP/DSD_MSTI@DF_MSTI/latest?references=all) and replace key=all with the researchers series",
      "the measure and unit codes of researchers per thousand employed, to be set as filters once known",
      "REF_AREA as the economy dimension (the SDMX cross-domain concept; the OECD's use of it is unverified)",
    ],
    notes:
      "Verified: the base URL and flow reference as given in DOMAIN.md section 6, and the SDMX 2.1 REST data query " +
      "pattern. Nothing about the flow's structure is verified; until the key is narrowed, key=all downloads the " +
      "whole flow. The legacy MSTI CSV (October 2020) in ../shared/data/oecd-legacy shows the series this should give.",
  },
  {
    name: "demo",
    title: "Demo economies (invented data)",
    kind: "demo",
    format: "csv",
    queries: [
      { id: "researchers", concept: "researchers_fte", unit: "full-time equivalent" },
      { id: "population", concept: "population", unit: "persons" },
      { id: "tfp", concept: "tfp_index", unit: "index" },
    ],
    enabled: false,
    notes:
      "Placeholder for the demo: invented data for fictional economies with user-assigned codes XAA-XZZ, " +
      "generated locally, never fetched. Every screen that shows it says the data is invented.",
  },
];

/** Every catalog definition, validated and completed (module load fails on an invalid one). */
export const CATALOG: readonly SourceDefinition[] = CATALOG_INPUTS.map((d) => parseSourceDefinition(d));

export function findCatalogSource(name: string): SourceDefinition | null {
  return CATALOG.find((d) => d.name === name) ?? null;
}

/** Throws RangeError naming the known sources when `name` is not in the catalog. */
export function getCatalogSourceOrThrow(name: string): SourceDefinition {
  const def = findCatalogSource(name);
  if (!def) throw new RangeError(`No catalog source ${name}; known: ${CATALOG.map((d) => d.name).join(", ")}`);
  return def;
}
