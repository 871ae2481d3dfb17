/**
 * Mapping: from observations as a source publishes them (dimension codes) to the store's terms
 * (economy, concept, unit), following the source definition. Pure.
 *
 * - A payload fetched for one query is mapped with that query; a payload that carries several
 *   series (a file, the demo release) is matched against every query's filters.
 * - The economy comes from the query's economy dimension, mapped to ISO 3166-1 alpha-3.
 * - The unit is the query's unit; a unit written as "{NAME}" is read from the observation's
 *   dimension or attribute NAME (e.g. "{UNIT_MEASURE}"), so a unit change in the data is seen.
 * - The value is multiplied by the query's scale; the status comes from the usual status
 *   attributes (OBS_STATUS in SDMX, obs_status in the World Bank API, "Flag Codes" in OECD files).
 */
import { mapEconomyCode, matchesFilters, type SourceDefinition, type SourceQuery } from "./sources";
import type { MappedObservation, RawObservation } from "./types";

export interface MappingIssue {
  code: "MAP_NO_ECONOMY" | "MAP_UNKNOWN_ECONOMY" | "MAP_NO_UNIT";
  message: string;
  /** Index of the (first) observation in its payload. */
  index: number;
  value?: string;
  /** How many observations share this problem (unknown economy codes are reported once per code). */
  count?: number;
}

export interface MappingOptions {
  /** Leave out observations whose economy code has no ISO 3166-1 alpha-3 equivalent (counted in `skippedEconomies`), instead of reporting them. */
  skipUnknownEconomies?: boolean;
}

export interface MappingResult {
  observations: MappedObservation[];
  issues: MappingIssue[];
  /** Observations that matched no query (other series of the same dataset). */
  unmatched: number;
  /** With skipUnknownEconomies: codes left out and how many observations each had. */
  skippedEconomies: Record<string, number>;
}

function where(o: RawObservation, index: number): string {
  const l = o.location;
  if (l?.line) return `line ${l.line}`;
  if (l?.path) return l.path;
  return `observation ${index + 1}`;
}

const STATUS_ATTRIBUTES = ["OBS_STATUS", "obs_status", "Flag Codes", "status"];

function statusOf(o: RawObservation): string | null {
  for (const a of STATUS_ATTRIBUTES) {
    const v = o.attributes[a];
    if (v !== undefined && v !== "") return v;
  }
  return null;
}

function unitOf(q: SourceQuery, o: RawObservation): string | null {
  const m = /^\{([^{}]+)\}$/.exec(q.unit);
  if (!m) return q.unit;
  const name = m[1]!;
  return o.dimensions[name] ?? o.attributes[name] ?? null;
}

/**
 * Map the observations of one payload. `query` is the query the payload was fetched for, or
 * undefined when the payload may hold any of the definition's series.
 * Example: with a query { concept: "population", unit: "persons", scale: 1000, economyDimension: "REF_AREA" },
 * { dimensions: { REF_AREA: "FR" }, period: "2020", value: 67.4, attributes: {} } maps to
 * { economy: "FRA", concept: "population", unit: "persons", period: "2020", value: 67400, ... }.
 */
export function mapObservations(
  def: Pick<SourceDefinition, "queries" | "economyCodeMap">,
  raws: Iterable<RawObservation>,
  query?: SourceQuery,
  options: MappingOptions = {},
): MappingResult {
  const candidates = query ? [query] : def.queries;
  const observations: MappedObservation[] = [];
  const issues: MappingIssue[] = [];
  const unknown = new Map<string, MappingIssue>();
  const skippedEconomies: Record<string, number> = {};
  let unmatched = 0;
  let index = -1;
  for (const o of raws) {
    index++;
    const q = candidates.find((c) => matchesFilters(c, o.dimensions));
    if (!q) {
      unmatched++;
      continue;
    }
    const rawEconomy = o.dimensions[q.economyDimension];
    if (rawEconomy === undefined) {
      issues.push({ code: "MAP_NO_ECONOMY", message: `${where(o, index)}: no ${q.economyDimension} dimension or column`, index });
      continue;
    }
    const economy = mapEconomyCode(def, rawEconomy);
    if (!economy) {
      if (options.skipUnknownEconomies) {
        skippedEconomies[rawEconomy] = (skippedEconomies[rawEconomy] ?? 0) + 1;
        continue;
      }
      const seen = unknown.get(rawEconomy);
      if (seen) seen.count = (seen.count ?? 1) + 1;
      else {
        const issue: MappingIssue = { code: "MAP_UNKNOWN_ECONOMY", message: "", index, value: rawEconomy, count: 1 };
        issue.message = `${where(o, index)}: economy code "${rawEconomy}" has no ISO 3166-1 alpha-3 equivalent (map it in economyCodeMap, or skip such codes)`;
        unknown.set(rawEconomy, issue);
        issues.push(issue);
      }
      continue;
    }
    const unit = unitOf(q, o);
    if (!unit) {
      issues.push({ code: "MAP_NO_UNIT", message: `${where(o, index)}: no ${q.unit.slice(1, -1)} for its unit`, index });
      continue;
    }
    observations.push({
      economy,
      concept: q.concept,
      unit,
      seriesKey: q.id,
      period: o.period,
      value: o.value === null ? null : o.value * q.scale,
      status: statusOf(o),
    });
  }
  for (const i of unknown.values()) if ((i.count ?? 1) > 1) i.message += ` (${i.count} observations)`;
  return { observations, issues, unmatched, skippedEconomies };
}
