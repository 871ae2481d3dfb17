/**
 * World Bank indicators API v2 JSON responses to observations.
 *
 * Shape (World Bank API v2 documentation; DOMAIN.md section 6):
 *   [ {page, pages, per_page, total, sourceid?, lastupdated},
 *     [ {indicator: {id, value}, country: {id, value}, countryiso3code, date, value, unit, obs_status, decimal}, ... ] ]
 * An error answer is [ {message: [ {id, key, value} ]} ] -> WORLDBANK_API_ERROR.
 * A page without data has null (or []) in second place.
 *
 * Observations: dimensions { indicator, country } (country: countryiso3code, or country.id when
 * the API leaves the ISO3 code empty), period from `date` (2019, 2019Q1, 2019M07 are read as SDMX
 * periods), value null -> explicitly missing. Attributes: obs_status, unit, decimal when given.
 * meta.pagination carries page/pages/perPage/total (numbers; per_page arrives as a string) so a
 * connector can ask for the next page; meta.prepared is `lastupdated`.
 */
import { z } from "zod";
import {
  baseOptionsShape,
  describeValueProblem,
  isDecimalText,
  ParseState,
  readJsonDocument,
  validateOptions,
  valueProblem,
  type DatasetMeta,
  type ObservationSink,
  type ParsedObservation,
  type ParseResult,
  type ParseSummary,
  type PayloadInput,
  type StreamControl,
} from "./common";
import { jsonPath, quoteValue } from "./errors";
import { isParsedPeriod, PeriodCache } from "./period";

const SOURCE = "worldbank-json";

export const worldBankOptionsSchema = z.strictObject({ ...baseOptionsShape });
export type WorldBankOptions = z.input<typeof worldBankOptionsSchema>;
type Options = z.output<typeof worldBankOptionsSchema>;

type Json = unknown;
type JsonObject = Record<string, Json>;

function isObject(v: Json): v is JsonObject {
  return typeof v === "object" && v !== null && !Array.isArray(v);
}

/** A count from the paging header: a number, or a numeric string ("50"). */
function count(v: Json): number | undefined {
  if (typeof v === "number" && Number.isFinite(v)) return v;
  if (typeof v === "string" && /^\d+$/.test(v.trim())) return Number(v.trim());
  return undefined;
}

function text(v: Json): string | undefined {
  if (typeof v === "string") return v;
  if (typeof v === "number") return String(v);
  return undefined;
}

function read(root: Json, state: ParseState, opts: Options, sink: ObservationSink): void {
  if (!Array.isArray(root) || root.length === 0) {
    state.report("JSON_UNEXPECTED_SHAPE", { path: "$" }, "a World Bank API v2 response is an array [header, data]");
    return;
  }
  const head = root[0];
  if (isObject(head) && Array.isArray(head.message)) {
    const m = head.message[0];
    const id = isObject(m) ? text(m.id) : undefined;
    const key = isObject(m) ? text(m.key) : undefined;
    const value = isObject(m) ? text(m.value) : undefined;
    state.report(
      "WORLDBANK_API_ERROR",
      { path: "$[0].message[0]" },
      `the World Bank API answered with error ${id ?? "?"}${key ? ` (${key})` : ""}${value ? `: ${value}` : ""}`,
      id,
    );
    return;
  }
  if (!isObject(head)) {
    state.report("JSON_UNEXPECTED_SHAPE", { path: "$[0]" }, "the first element must be the paging header {page, pages, per_page, total}");
    return;
  }
  const page = count(head.page);
  const pages = count(head.pages);
  const perPage = count(head.per_page);
  const total = count(head.total);
  if (page !== undefined && pages !== undefined && perPage !== undefined && total !== undefined) {
    state.meta.pagination = { page, pages, perPage, total };
  } else {
    const missing = ["page", "pages", "per_page", "total"].find((k) => count(head[k]) === undefined)!;
    state.report("JSON_UNEXPECTED_SHAPE", { path: `$[0].${missing}`, field: missing }, `the paging header has no usable '${missing}'`, head[missing]);
  }
  if (typeof head.lastupdated === "string") state.meta.prepared = head.lastupdated;
  const rows = root[1];
  if (rows === null || rows === undefined) {
    state.note("the page holds no data (null)");
    return;
  }
  if (!Array.isArray(rows)) {
    state.report("JSON_UNEXPECTED_SHAPE", { path: "$[1]" }, "the second element must be the array of observations");
    return;
  }
  const periods = new PeriodCache({ lenient: true });
  const datasets = new Map<string, DatasetMeta>();
  const seen = new Map<string, Set<string>>();
  const dimsCache = new Map<string, Readonly<Record<string, string>>>();
  rows.forEach((row, i) => {
    const where = (...rest: (string | number)[]) => jsonPath([1, i, ...rest]);
    if (!isObject(row)) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: where() }, "an observation must be an object");
      state.skip("issue");
      return;
    }
    const indicator = isObject(row.indicator) ? text(row.indicator.id) : undefined;
    const iso3 = text(row.countryiso3code);
    const country = iso3 || (isObject(row.country) ? text(row.country.id) : undefined);
    if (!indicator) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: where("indicator", "id"), field: "indicator" }, "the observation has no indicator id");
      state.skip("issue");
      return;
    }
    if (!country) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: where("countryiso3code"), field: "countryiso3code" }, "the observation has neither countryiso3code nor country.id");
      state.skip("issue");
      return;
    }
    let ds = datasets.get(indicator);
    if (!ds) {
      ds = { id: indicator, timeDimension: "date" };
      const label = isObject(row.indicator) ? text(row.indicator.value) : undefined;
      if (label) ds.label = label;
      if (state.meta.prepared) ds.updated = state.meta.prepared;
      datasets.set(indicator, ds);
      state.meta.datasets.push(ds);
    }
    const date = text(row.date);
    if (date === undefined || date === "") {
      state.report("PERIOD_MISSING", { path: where("date"), field: "date" }, "the observation has no date");
      state.skip("issue");
      return;
    }
    const p = periods.get(date);
    if (!isParsedPeriod(p)) {
      state.report(p.problem, { path: where("date"), field: "date" }, p.reason, date);
      state.skip("issue");
      return;
    }
    const raw = row.value;
    let value: number | null;
    if (raw === null || raw === undefined) value = null;
    else {
      const n = typeof raw === "number" ? raw : typeof raw === "string" && isDecimalText(raw.trim()) ? Number(raw) : NaN;
      if (typeof raw !== "number" && Number.isNaN(n)) {
        state.report("WORLDBANK_VALUE_NOT_NUMERIC", { path: where("value"), field: "value" }, `${quoteValue(raw)} is not a number`, raw);
        state.skip("issue");
        return;
      }
      const problem = valueProblem(n, opts.nonNegative);
      if (problem) {
        state.report(problem, { path: where("value"), field: "value" }, describeValueProblem(problem, raw), raw);
        state.skip("issue");
        return;
      }
      value = n;
    }
    if (opts.checkDuplicates) {
      const key = `${indicator}\u0001${country}`;
      let s = seen.get(key);
      if (!s) seen.set(key, (s = new Set()));
      if (s.has(p.canonical)) {
        state.report("DUPLICATE_OBSERVATION", { path: where("date"), field: "date" }, `${indicator} for ${country} in ${p.canonical} appears twice on this page`, date);
        state.skip("issue");
        return;
      }
      s.add(p.canonical);
    }
    const dkey = `${indicator}\u0001${country}`;
    let dimensions = dimsCache.get(dkey);
    if (!dimensions) dimsCache.set(dkey, (dimensions = { indicator, country }));
    const attributes: Record<string, string> = {};
    const status = text(row.obs_status);
    if (status) attributes.obs_status = status;
    const unit = text(row.unit);
    if (unit) attributes.unit = unit;
    if (typeof row.decimal === "number") attributes.decimal = String(row.decimal);
    const o: ParsedObservation = opts.locations
      ? { dimensions, period: p.canonical, value, attributes, dataset: indicator, location: { path: where() } }
      : { dimensions, period: p.canonical, value, attributes, dataset: indicator };
    state.counts.observations++;
    sink(o);
  });
}

/**
 * Parse one page of a World Bank indicators API v2 JSON response, handing each observation to
 * `onObservation`. meta.pagination tells whether more pages follow.
 *
 * Example: parseWorldBankStream(body, {}, push) -> meta.pagination { page: 1, pages: 3, perPage: 50, total: 120 }
 *
 * Reference: World Bank Indicators API v2 (api.worldbank.org/v2), response format as in DOMAIN.md section 6.
 */
export async function parseWorldBankStream(input: PayloadInput, options: WorldBankOptions | undefined, onObservation: ObservationSink, control: StreamControl = {}): Promise<ParseSummary> {
  const opts = validateOptions(worldBankOptionsSchema, options, SOURCE);
  const state = new ParseState("worldbank-json", SOURCE, opts);
  state.afterChunk = control.afterChunk;
  const doc = await readJsonDocument(input, state);
  if (doc.ok) read(doc.value, state, opts, onObservation);
  return state.summary();
}

/** Parse one page of a World Bank indicators API v2 JSON response. */
export async function parseWorldBank(input: PayloadInput, options?: WorldBankOptions): Promise<ParseResult> {
  const observations: ParsedObservation[] = [];
  const summary = await parseWorldBankStream(input, options, (o) => observations.push(o));
  return { observations, ...summary };
}
