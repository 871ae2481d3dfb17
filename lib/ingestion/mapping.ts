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
  /** Index of the observation in its payload. */
  index: number;
  value?: string;
}

export interface MappingResult {
  observations: MappedObservation[];
  issues: MappingIssue[];
  /** Observations that matched no query (other series of the same dataset). */
  unmatched: number;
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
): MappingResult {
  const candidates = query ? [query] : def.queries;
  const observations: MappedObservation[] = [];
  const issues: MappingIssue[] = [];
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
      issues.push({ code: "MAP_NO_ECONOMY", message: `observation ${index + 1} has no ${q.economyDimension} dimension`, index });
      continue;
    }
    const economy = mapEconomyCode(def, rawEconomy);
    if (!economy) {
      issues.push({ code: "MAP_UNKNOWN_ECONOMY", message: `economy code "${rawEconomy}" has no ISO 3166-1 alpha-3 equivalent (add it to economyCodeMap)`, index, value: rawEconomy });
      continue;
    }
    const unit = unitOf(q, o);
    if (!unit) {
      issues.push({ code: "MAP_NO_UNIT", message: `observation ${index + 1} has no ${q.unit.slice(1, -1)} for its unit`, index });
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
  return { observations, issues, unmatched };
}
