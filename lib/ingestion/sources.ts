/**
 * Source definitions: what to fetch from where, configured as data and validated by zod.
 *
 * A definition names the API kind and payload format, a URL template, and one query per series
 * (SDMX key, World Bank indicator or JSON-stat dataset) with the concept and unit it carries.
 * buildRequestUrls turns a definition into concrete URLs; mapEconomyCode turns the economy codes
 * a source publishes into ISO 3166-1 alpha-3.
 *
 * URL templates: placeholders `{name}` are filled from, in this order, the built-ins (`base`,
 * `page`, `per_page`), the query's own fields (`key`, `indicator`, `dataset`), the query's
 * `params`, then the definition's `params` (e.g. `agency`, `flow`, `version`, `codes`,
 * `startPeriod`). A query-string parameter whose whole value is one placeholder with no value is
 * left out (`&startPeriod={startPeriod}` disappears when no start period is set); a placeholder
 * without a value anywhere else is a validation error.
 */
import { z } from "zod";
import { validate as isValidCron } from "node-cron";
import { alpha2ToAlpha3 } from "@/lib/economies";
import { CONCEPTS } from "@/lib/ingestion/types";

export const SOURCE_KINDS = ["sdmx", "jsonstat", "worldbank", "file", "demo"] as const;
export type SourceKind = (typeof SOURCE_KINDS)[number];

export const SOURCE_FORMATS = ["sdmx-json", "sdmx-csv", "jsonstat", "worldbank-json", "csv"] as const;
export type SourceFormat = (typeof SOURCE_FORMATS)[number];

/** Formats each kind of source may deliver. */
export const FORMATS_BY_KIND: Readonly<Record<SourceKind, readonly SourceFormat[]>> = {
  sdmx: ["sdmx-json", "sdmx-csv"],
  jsonstat: ["jsonstat"],
  worldbank: ["worldbank-json"],
  file: ["csv", "sdmx-csv", "sdmx-json", "jsonstat"],
  demo: SOURCE_FORMATS,
};

/**
 * The dimension that carries the economy when a query does not name one: REF_AREA is the SDMX
 * cross-domain concept for the reference area; Eurostat's JSON-stat datasets call it geo; World
 * Bank observations carry the economy in the parser's `country` dimension (from countryiso3code).
 * Files and demo sources must name theirs.
 */
export const DEFAULT_ECONOMY_DIMENSION: Readonly<Partial<Record<SourceKind, string>>> = {
  sdmx: "REF_AREA",
  jsonstat: "geo",
  worldbank: "country",
  demo: "economy",
};

export const DEFAULT_SCHEDULE = "0 6 * * *"; // daily at 06:00 in the source's timezone

const QUERY_FIELD_PLACEHOLDERS = ["key", "indicator", "dataset"] as const;
const PLACEHOLDER = /\{([A-Za-z_][A-Za-z0-9_]*)\}/g;
/** A query-string value that is one placeholder and nothing else: optional, dropped when empty. */
const WHOLE_PLACEHOLDER = /^\{([A-Za-z_][A-Za-z0-9_]*)\}$/;

const slug = z
  .string()
  .regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, "must be a slug: lower-case letters, digits and single hyphens");
const paramName = z.string().regex(/^[A-Za-z_][A-Za-z0-9_]*$/, "must be a placeholder name (letters, digits, _)");
const alpha3 = z.string().regex(/^[A-Z]{3}$/, "must be a three-letter upper-case code (ISO 3166-1 alpha-3)");
const filterValues = z.union([z.string().min(1), z.array(z.string().min(1)).min(1)]);

export const sourceQuerySchema = z.strictObject({
  /** Identifies the query in payloads and logs; default: indicator, key or dataset. */
  id: z.string().regex(/^[A-Za-z0-9._@,+-]+$/, "must contain only letters, digits and . _ @ , + -").optional(),
  /** SDMX series key, e.g. "A.FRA+DEU.RSE" (dimension values joined by ".", "+" for several). */
  key: z.string().min(1).optional(),
  /** World Bank indicator code, e.g. "SP.POP.TOTL". */
  indicator: z.string().min(1).optional(),
  /** JSON-stat dataset code, e.g. Eurostat "rd_p_persocc". */
  dataset: z.string().min(1).optional(),
  concept: z.enum(CONCEPTS),
  /** Unit as published, e.g. "per million inhabitants". */
  unit: z.string().min(1),
  /** Multiplier from published values to the unit stored (1e3 for values in thousands). */
  scale: z.number().finite().positive().default(1),
  /** Dimension carrying the economy code; default by kind (DEFAULT_ECONOMY_DIMENSION). */
  economyDimension: z.string().min(1).optional(),
  /**
   * Dimension codes the series must carry, e.g. { unit: "FTE", sectperf: "TOT" }. The mapping step
   * keeps only matching observations (matchesFilters); sources with filtersInQuery also send them
   * as query parameters (name=value, repeated for a list), as Eurostat's statistics API takes them.
   */
  filters: z.record(z.string().min(1), filterValues).default({}),
  /** Placeholder values for this query only. */
  params: z.record(paramName, z.string()).default({}),
});

const pagingSchema = z.strictObject({
  /** Rows requested per page ({per_page}). */
  perPage: z.int().min(1).max(100_000).default(1000),
  /** Refuse a query announcing more pages than this. */
  maxPages: z.int().min(1).max(10_000).default(200),
});

const baseUrlSchema = z
  .string()
  .refine((s) => URL.canParse(s), "must be an absolute URL")
  .refine((s) => !URL.canParse(s) || ["http:", "https:", "file:"].includes(new URL(s).protocol), "must use http, https or file")
  .refine((s) => !URL.canParse(s) || (new URL(s).username === "" && new URL(s).password === ""), "must not carry credentials")
  .refine((s) => !URL.canParse(s) || new URL(s).search === "", "must not carry a query string (put parameters in urlTemplate)");

const sourceDefinitionObject = z.strictObject({
  name: slug,
  title: z.string().min(1),
  kind: z.enum(SOURCE_KINDS),
  format: z.enum(SOURCE_FORMATS),
  baseUrl: baseUrlSchema.optional(),
  urlTemplate: z.string().min(1).optional(),
  /** Placeholder values shared by all queries, e.g. { agency: "OECD.STI.STP", codes: "all" }. */
  params: z.record(paramName, z.string()).default({}),
  /** Send query filters as query parameters. Default: true for jsonstat, false otherwise. */
  filtersInQuery: z.boolean().optional(),
  /** Paging of World Bank style APIs ({page}, {per_page}). */
  paging: pagingSchema.default({ perPage: 1000, maxPages: 200 }),
  queries: z.array(sourceQuerySchema).min(1, "must list at least one query"),
  /** Source code -> ISO 3166-1 alpha-3, for codes that are not ISO alpha-2/alpha-3 (Eurostat "EL" -> "GRC"). */
  economyCodeMap: z.record(z.string().min(1), alpha3).default({}),
  /** Cron expression (five fields, or six with seconds), as node-cron reads it. */
  schedule: z.string().refine((s) => isValidCron(s), "must be a valid cron expression").default(DEFAULT_SCHEDULE),
  /** IANA time zone of the schedule. */
  timezone: z.string().refine(isTimeZone, "must be an IANA time zone, e.g. Europe/Paris").default("UTC"),
  /** Public sources are off until someone has checked them. */
  enabled: z.boolean().default(false),
  timeoutMs: z.int().min(1).max(600_000).default(30_000),
  retries: z.int().min(0).max(10).default(3),
  maxBytes: z.int().min(1).default(50 * 1024 * 1024),
  /** Name of the environment variable holding the API key; never the key itself. */
  apiKeyEnv: z.string().regex(/^[A-Z][A-Z0-9_]*$/, "must be an environment variable name (A-Z, 0-9, _)").optional(),
  /** Send the key in this request header ... */
  apiKeyHeader: z.string().regex(/^[A-Za-z0-9!#$%&'*+.^_`|~-]+$/, "must be an HTTP header name").optional(),
  /** ... or in this query parameter (hidden in messages). */
  apiKeyParam: paramName.optional(),
  /** Facts still to check against the live API; a source cannot be enabled while any remain. */
  unverified: z.array(z.string().min(1)).default([]),
  notes: z.string().default(""),
});

type DefinitionShape = z.output<typeof sourceDefinitionObject>;

export const sourceDefinitionSchema = sourceDefinitionObject
  .superRefine((def, ctx) => {
    const issue = (path: (string | number)[], message: string) => ctx.addIssue({ code: "custom", path, message });

    if (!FORMATS_BY_KIND[def.kind].includes(def.format)) {
      issue(["format"], `format "${def.format}" does not fit kind "${def.kind}" (allowed: ${FORMATS_BY_KIND[def.kind].join(", ")})`);
    }
    // A file source without a URL is import-only (`ideafront import`); with one it can be fetched.
    if (def.kind !== "demo" && !(def.kind === "file" && def.baseUrl === undefined && def.urlTemplate === undefined)) {
      if (def.baseUrl === undefined) issue(["baseUrl"], `is required for kind "${def.kind}"`);
      if (def.urlTemplate === undefined) issue(["urlTemplate"], `is required for kind "${def.kind}"`);
    }
    if (def.kind === "worldbank" && def.urlTemplate !== undefined) {
      for (const p of ["{page}", "{per_page}"]) {
        if (!def.urlTemplate.includes(p)) issue(["urlTemplate"], `must contain ${p}: World Bank responses are paged`);
      }
    }
    if (def.apiKeyEnv !== undefined && (def.apiKeyHeader === undefined) === (def.apiKeyParam === undefined)) {
      issue(["apiKeyEnv"], "needs exactly one of apiKeyHeader or apiKeyParam to say how the key is sent");
    }
    if (def.apiKeyEnv === undefined && (def.apiKeyHeader !== undefined || def.apiKeyParam !== undefined)) {
      issue(["apiKeyEnv"], "is required when apiKeyHeader or apiKeyParam is set");
    }
    if (def.enabled && def.unverified.length > 0) {
      issue(["enabled"], `cannot be true while unverified items remain: ${def.unverified.join("; ")}`);
    }

    const required: Partial<Record<SourceKind, (typeof QUERY_FIELD_PLACEHOLDERS)[number]>> = {
      sdmx: "key",
      worldbank: "indicator",
      jsonstat: "dataset",
    };
    const seen = new Map<string, number>();
    def.queries.forEach((q, i) => {
      const field = required[def.kind];
      if (field && q[field] === undefined && !(field === "dataset" && def.params.dataset !== undefined)) {
        issue(["queries", i, field], `is required for kind "${def.kind}"`);
      }
      if (q.economyDimension === undefined && DEFAULT_ECONOMY_DIMENSION[def.kind] === undefined) {
        issue(["queries", i, "economyDimension"], `is required for kind "${def.kind}" (no default)`);
      }
      const id = queryIdOf(q);
      if (id === undefined) issue(["queries", i, "id"], "is required when the query has no indicator, key or dataset");
      else if (seen.has(id)) issue(["queries", i, "id"], `"${id}" repeats query ${seen.get(id)}; give each query its own id`);
      else seen.set(id, i);

      if (def.urlTemplate !== undefined) {
        for (const name of unresolvedPathPlaceholders(def, q)) {
          issue(["queries", i], `has no value for placeholder {${name}} of urlTemplate (set it in params)`);
        }
      }
    });
  })
  .transform((def) => ({
    ...def,
    queries: def.queries.map((q) => ({
      ...q,
      id: queryIdOf(q) as string,
      economyDimension: q.economyDimension ?? (DEFAULT_ECONOMY_DIMENSION[def.kind] as string),
    })),
  }));

export type SourceDefinitionInput = z.input<typeof sourceDefinitionSchema>;
export type SourceDefinition = z.output<typeof sourceDefinitionSchema>;
export type SourceQuery = SourceDefinition["queries"][number];

export interface SourceDefinitionIssue {
  /** Field path, e.g. "queries[0].concept". */
  readonly path: string;
  readonly message: string;
}

export class SourceDefinitionError extends Error {
  readonly issues: readonly SourceDefinitionIssue[];
  constructor(name: string, issues: readonly SourceDefinitionIssue[]) {
    const first = issues
      .slice(0, 3)
      .map((i) => `${i.path || "(definition)"} ${i.message}`)
      .join("; ");
    const more = issues.length > 3 ? ` (and ${issues.length - 3} more)` : "";
    super(`Source definition ${name} is invalid: ${first}${more}.`);
    this.name = "SourceDefinitionError";
    this.issues = issues;
  }
}

/** "queries.0.concept" as "queries[0].concept". */
export function formatIssuePath(path: readonly PropertyKey[]): string {
  return path.reduce<string>((acc, part) => {
    if (typeof part === "number") return `${acc}[${part}]`;
    return acc === "" ? String(part) : `${acc}.${String(part)}`;
  }, "");
}

/**
 * Validates and completes a source definition (defaults filled, query ids and economy dimensions
 * resolved). Throws SourceDefinitionError whose issues name each field path.
 * Example: parseSourceDefinition({ ...def, queries: [{ ...q, concept: "gdp" }] }) throws
 * "Source definition "x" is invalid: queries[0].concept Invalid option: ...".
 */
export function parseSourceDefinition(input: unknown): SourceDefinition {
  const result = sourceDefinitionSchema.safeParse(input);
  if (result.success) return result.data;
  const name =
    typeof input === "object" && input !== null && typeof (input as { name?: unknown }).name === "string"
      ? `"${(input as { name: string }).name}"`
      : "(unnamed)";
  throw new SourceDefinitionError(
    name,
    result.error.issues.map((i) => ({ path: formatIssuePath(i.path), message: i.message })),
  );
}

function queryIdOf(q: { id?: string; indicator?: string; key?: string; dataset?: string }): string | undefined {
  return q.id ?? q.indicator ?? q.key ?? q.dataset;
}

/** Whether `tz` is an IANA time zone this runtime knows (e.g. "Europe/Paris"). */
export function isTimeZone(tz: string): boolean {
  try {
    new Intl.DateTimeFormat("en", { timeZone: tz });
    return true;
  } catch {
    return false;
  }
}

type QueryLike = Pick<SourceQuery, "key" | "indicator" | "dataset" | "params">;
type DefinitionLike = Pick<DefinitionShape, "baseUrl" | "urlTemplate" | "params" | "paging">;

function placeholderValue(
  name: string,
  def: DefinitionLike,
  q: QueryLike,
  page: number,
): string | undefined {
  switch (name) {
    case "base":
      return def.baseUrl?.replace(/\/+$/, "");
    case "page":
      return String(page);
    case "per_page":
      return String(def.paging.perPage);
  }
  if ((QUERY_FIELD_PLACEHOLDERS as readonly string[]).includes(name)) {
    const v = q[name as (typeof QUERY_FIELD_PLACEHOLDERS)[number]];
    if (v !== undefined) return v;
  }
  return q.params[name] ?? def.params[name];
}

function splitTemplate(template: string): { path: string; query: string[] } {
  const at = template.indexOf("?");
  if (at < 0) return { path: template, query: [] };
  return { path: template.slice(0, at), query: template.slice(at + 1).split("&").filter((p) => p !== "") };
}

function unresolvedPathPlaceholders(def: DefinitionLike, q: QueryLike): string[] {
  const { path, query } = splitTemplate(def.urlTemplate ?? "");
  const missing = new Set<string>();
  const check = (text: string) => {
    for (const m of text.matchAll(PLACEHOLDER)) {
      const name = m[1] as string;
      const value = placeholderValue(name, def, q, 1);
      if (value === undefined || value === "") missing.add(name);
    }
  };
  check(path);
  for (const part of query) {
    const [, value = ""] = part.split(/=(.*)/s);
    if (WHOLE_PLACEHOLDER.test(value)) continue; // optional: dropped when empty
    check(part);
  }
  missing.delete("base"); // a missing baseUrl is reported on its own field
  return [...missing];
}

/** Percent-encodes all but the characters RFC 3986 allows in a path segment (pchar, minus "/"). */
function encodePathValue(value: string): string {
  return value.replace(/[^A-Za-z0-9\-._~!$&'()*+,;=:@]/gu, (c) => encodeURIComponent(c));
}

/** Percent-encodes a query component value; "&", "=", "+" and "#" are always encoded. */
function encodeQueryValue(value: string): string {
  return value.replace(/[^A-Za-z0-9\-._~!$'()*,;:@/?]/gu, (c) => encodeURIComponent(c));
}

function fill(text: string, resolve: (name: string) => string | undefined, encode: (v: string) => string): string {
  return text.replace(PLACEHOLDER, (whole, name: string) => {
    const value = resolve(name);
    if (value === undefined || value === "") {
      throw new SourceDefinitionError("(template)", [{ path: "urlTemplate", message: `has no value for {${name}}` }]);
    }
    return name === "base" ? value : encode(value);
  });
}

export interface RequestUrl {
  readonly url: string;
  readonly query: SourceQuery;
  readonly queryIndex: number;
  /** Page number filled into {page}, or null when the template is not paged. */
  readonly page: number | null;
}

/**
 * Concrete request URLs of a validated definition, one per query, for page `page` (default 1).
 * Throws RangeError for a page below 1 and for demo sources (nothing to request).
 * Example: a World Bank definition with template
 * "{base}/country/{codes}/indicator/{indicator}?format=json&per_page={per_page}&page={page}" gives
 * "https://api.worldbank.org/v2/country/all/indicator/SP.POP.TOTL?format=json&per_page=1000&page=1".
 */
export function buildRequestUrls(def: SourceDefinition, options: { page?: number } = {}): RequestUrl[] {
  const page = options.page ?? 1;
  if (!Number.isInteger(page) || page < 1) throw new RangeError(`page must be an integer >= 1, got ${page}`);
  if (def.urlTemplate === undefined) throw new RangeError(`source ${def.name} (kind ${def.kind}) has no URL to request`);
  const template = def.urlTemplate;
  const paged = template.includes("{page}");
  const filtersInQuery = def.filtersInQuery ?? def.kind === "jsonstat";

  return def.queries.map((q, queryIndex) => {
    const resolve = (name: string) => placeholderValue(name, def, q, page);
    const { path, query } = splitTemplate(template);
    const parts: string[] = [];
    for (const part of query) {
      const eq = part.indexOf("=");
      const name = eq < 0 ? part : part.slice(0, eq);
      const value = eq < 0 ? null : part.slice(eq + 1);
      const only = value?.match(WHOLE_PLACEHOLDER);
      if (only) {
        const v = resolve(only[1] as string);
        if (v === undefined || v === "") continue;
      }
      const filledName = fill(name, resolve, encodeQueryValue);
      parts.push(value === null ? filledName : `${filledName}=${fill(value, resolve, encodeQueryValue)}`);
    }
    if (filtersInQuery) {
      for (const dim of Object.keys(q.filters).sort()) {
        const values = q.filters[dim] as string | string[];
        for (const v of Array.isArray(values) ? values : [values]) {
          parts.push(`${encodeQueryValue(dim)}=${encodeQueryValue(v)}`);
        }
      }
    }
    const built = fill(path, resolve, encodePathValue) + (parts.length ? `?${parts.join("&")}` : "");
    if (!URL.canParse(built)) {
      throw new SourceDefinitionError(`"${def.name}"`, [
        { path: `queries[${queryIndex}]`, message: `gives an invalid URL: ${built}` },
      ]);
    }
    return { url: new URL(built).href, query: q, queryIndex, page: paged ? page : null };
  });
}

/**
 * The ISO 3166-1 alpha-3 code of an economy code as a source publishes it, or null when it has
 * none (aggregates such as Eurostat "EU27_2020"). Order: the definition's economyCodeMap, then a
 * three-letter code as it stands (ISO alpha-3 or an aggregate such as World Bank "WLD"), then an
 * ISO alpha-2 code converted with i18n-iso-countries (Eurostat's EL and UK included). Example: with economyCodeMap { EL: "GRC" },
 * "EL" gives "GRC", "FR" gives "FRA", "DEU" gives "DEU".
 */
export function mapEconomyCode(def: Pick<SourceDefinition, "economyCodeMap">, code: string): string | null {
  const mapped = def.economyCodeMap[code];
  if (mapped !== undefined) return mapped;
  const upper = code.trim().toUpperCase();
  if (/^[A-Z]{3}$/.test(upper)) return upper;
  if (/^[A-Z]{2}$/.test(upper)) return alpha2ToAlpha3(upper);
  return null;
}

/** Whether an observation's dimensions carry every code the query's filters ask for. */
export function matchesFilters(query: Pick<SourceQuery, "filters">, dimensions: Readonly<Record<string, string>>): boolean {
  return Object.entries(query.filters).every(([dim, want]) => {
    const have = dimensions[dim];
    return have !== undefined && (Array.isArray(want) ? want.includes(have) : want === have);
  });
}
