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
import { mapEconomyCode, type SourceDefinition, type SourceQuery } from "./sources";
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


/**
 * Maps observations one at a time, so a large payload can be mapped while it is parsed, without
 * first holding every parsed observation (mapObservations is this over a whole list).
 * `add` returns the mapped observation, or null when the observation matched no query, was left
 * out (unknown economy with skipUnknownEconomies) or has a problem (kept for `finish`).
 * `index` counts every observation given to `add`, from 0, for locations without line or path.
 * Example: const m = new ObservationMapper(def, query); for (const o of raws) m.add(o); m.finish().issues.
 */
export class ObservationMapper {
  private readonly candidates: readonly CompiledQuery[];
  private readonly issues: MappingIssue[] = [];
  private readonly unknown = new Map<string, MappingIssue>();
  private readonly skippedEconomies: Record<string, number> = {};
  /** Published economy code -> ISO alpha-3 (or null), so each code is looked up once. */
  private readonly economies = new Map<string, string | null>();
  private unmatched = 0;
  private index = -1;
  private finished = false;

  constructor(
    private readonly def: Pick<SourceDefinition, "queries" | "economyCodeMap">,
    query?: SourceQuery,
    private readonly options: MappingOptions = {},
  ) {
    this.candidates = (query ? [query] : def.queries).map(compileQuery);
  }

  add(o: RawObservation): MappedObservation | null {
    const index = ++this.index;
    let c: CompiledQuery | undefined;
    for (const candidate of this.candidates) {
      if (candidate.matches(o.dimensions)) {
        c = candidate;
        break;
      }
    }
    if (!c) {
      this.unmatched++;
      return null;
    }
    const q = c.query;
    const rawEconomy = o.dimensions[q.economyDimension];
    if (rawEconomy === undefined) {
      this.issues.push({ code: "MAP_NO_ECONOMY", message: `${where(o, index)}: no ${q.economyDimension} dimension or column`, index });
      return null;
    }
    let economy = this.economies.get(rawEconomy);
    if (economy === undefined) {
      economy = mapEconomyCode(this.def, rawEconomy);
      this.economies.set(rawEconomy, economy);
    }
    if (!economy) {
      if (this.options.skipUnknownEconomies) {
        this.skippedEconomies[rawEconomy] = (this.skippedEconomies[rawEconomy] ?? 0) + 1;
        return null;
      }
      const seen = this.unknown.get(rawEconomy);
      if (seen) seen.count = (seen.count ?? 1) + 1;
      else {
        const issue: MappingIssue = { code: "MAP_UNKNOWN_ECONOMY", message: "", index, value: rawEconomy, count: 1 };
        issue.message = `${where(o, index)}: economy code "${rawEconomy}" has no ISO 3166-1 alpha-3 equivalent (map it in economyCodeMap, or skip such codes)`;
        this.unknown.set(rawEconomy, issue);
        this.issues.push(issue);
      }
      return null;
    }
    const unit = c.unitFrom === null ? q.unit : (o.dimensions[c.unitFrom] ?? o.attributes[c.unitFrom] ?? null);
    if (!unit) {
      this.issues.push({ code: "MAP_NO_UNIT", message: `${where(o, index)}: no ${q.unit.slice(1, -1)} for its unit`, index });
      return null;
    }
    return {
      economy,
      concept: q.concept,
      unit,
      seriesKey: q.id,
      period: o.period,
      value: o.value === null ? null : q.scale === 1 ? o.value : o.value * q.scale,
      status: statusOf(o),
    };
  }

  /** Problems, unmatched and skipped counts of everything added; call once, at the end. */
  finish(): Omit<MappingResult, "observations"> {
    if (!this.finished) for (const i of this.unknown.values()) if ((i.count ?? 1) > 1) i.message += ` (${i.count} observations)`;
    this.finished = true;
    return { issues: this.issues, unmatched: this.unmatched, skippedEconomies: this.skippedEconomies };
  }
}

/** A query with its filters and unit rule prepared for one observation after another. */
interface CompiledQuery {
  query: SourceQuery;
  /** matchesFilters(query, dimensions), without allocating per call. */
  matches(dimensions: Readonly<Record<string, string>>): boolean;
  /** Dimension or attribute the unit is read from ("{NAME}"), or null for a literal unit. */
  unitFrom: string | null;
}

function compileQuery(query: SourceQuery): CompiledQuery {
  const filters = Object.entries(query.filters).map(([dim, want]) => ({ dim, one: Array.isArray(want) ? null : want, many: Array.isArray(want) ? new Set(want) : null }));
  const m = /^\{([^{}]+)\}$/.exec(query.unit);
  return {
    query,
    unitFrom: m ? m[1]! : null,
    matches(dimensions) {
      for (const f of filters) {
        const have = dimensions[f.dim];
        if (have === undefined || (f.one !== null ? have !== f.one : !f.many!.has(have))) return false;
      }
      return true;
    },
  };
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
  const mapper = new ObservationMapper(def, query, options);
  const observations: MappedObservation[] = [];
  for (const o of raws) {
    const m = mapper.add(o);
    if (m) observations.push(m);
  }
  return { observations, ...mapper.finish() };
}
