/**
 * Shared shapes of the ingestion layer: what parsers produce, what the store consumes.
 *
 * Parsers turn bytes into RawObservation (dimension codes as the source publishes them).
 * A mapping step (source configuration) turns those into MappedObservation (our economy code,
 * concept and unit). The vintage store takes a whole release of MappedObservation at once.
 */

/** Concepts the tool models. Each series in the store is economy x concept x unit. */
export const CONCEPTS = [
  "researchers_fte", // researchers in full-time equivalents (count)
  "researchers_per_million", // researchers per million inhabitants
  "researchers_per_thousand_employed",
  "researchers_headcount",
  "population", // persons
  "employment", // persons engaged
  "hours", // average annual hours per worker
  "human_capital", // index
  "gdp_real", // real GDP at constant national prices
  "capital_services", // index or constant prices
  "labour_share", // share of labour compensation in GDP
  "tfp_index", // total factor productivity index
  "patents", // resident patent applications (count)
  "rd_share_gdp", // gross domestic R&D expenditure, percent of GDP
] as const;
export type Concept = (typeof CONCEPTS)[number];

/** Where in a payload something was found. Lines and columns are 1-based. */
export interface SourceLocation {
  /** File name or URL the payload came from, when known. */
  file?: string;
  line?: number;
  column?: number;
  /** JSON path, e.g. `$.data.dataSets[0].series["0:1"].observations["3"]`. */
  path?: string;
  /** Column or field name, when the problem is about a named field. */
  field?: string;
}

/** One observation as the source publishes it, before mapping to our economies and concepts. */
export interface RawObservation {
  /** Series and observation dimensions other than time, e.g. { REF_AREA: "FRA", MEASURE: "T_RS" }. */
  readonly dimensions: Readonly<Record<string, string>>;
  /** Period in SDMX reporting-period syntax: "2019", "2019-Q3", "2019-07", "2019-S1", "2019-W05", "2019-01-18". */
  readonly period: string;
  /** The value; null when the source publishes the observation as explicitly missing. */
  readonly value: number | null;
  /** Observation-level attributes, e.g. { OBS_STATUS: "E" } or { "Flag Codes": "B" }. */
  readonly attributes: Readonly<Record<string, string>>;
  readonly location?: SourceLocation;
}

/** One observation ready for the store. */
export interface MappedObservation {
  /** ISO 3166-1 alpha-3 code (or a user-assigned X?? code for invented economies, or an aggregate code). */
  readonly economy: string;
  readonly concept: Concept;
  /** Unit as published, e.g. "persons", "per million inhabitants", "index 2017=1". */
  readonly unit: string;
  /** Source key of the series (indicator code, SDMX series key), kept for provenance. */
  readonly seriesKey: string;
  readonly period: string;
  readonly value: number | null;
  /** Status flag (OBS_STATUS, flag code), if any. */
  readonly status?: string | null;
}

/** The unit each concept is usually published in (used when an import does not say). */
export const DEFAULT_UNITS: Readonly<Record<Concept, string>> = {
  researchers_fte: "full-time equivalent",
  researchers_per_million: "per million people",
  researchers_per_thousand_employed: "per thousand employed",
  researchers_headcount: "persons",
  population: "persons",
  employment: "persons",
  hours: "hours per worker per year",
  human_capital: "index",
  gdp_real: "constant national prices",
  capital_services: "index",
  labour_share: "share of GDP",
  tfp_index: "index",
  patents: "applications",
  rd_share_gdp: "percent of GDP",
};
