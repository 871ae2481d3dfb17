/**
 * SDMX-JSON data messages (1.0, 2.0.0, 2.1.0) to observations, read as a stream.
 *
 * Layouts: `series` (series keys such as "0:1:0" index structure.dimensions.series, observations
 * keyed by the index of the observation-level dimension, usually TIME_PERIOD) and the flat
 * `observations` layout (all non-dataset dimensions in the observation key). Dimension and
 * attribute values are resolved to their ids. The structure lives at `structure` (1.0, also under
 * `data`) or `data.structures[]` (2.x), a data set pointing to its structure with `structure`.
 *
 * Reading rules (SDMX-JSON field guide 2.1.0 unless said otherwise):
 * - An observation array is [measure values..., observation-level attribute values or indexes...,
 *   annotation indexes...]. Without `structure.measures` there is one measure (OBS_VALUE).
 * - Measure null -> explicitly missing (value null); "NaN" (SDMX-ML's missing marker) -> null;
 *   numeric text -> the number; other text -> SDMX_VALUE_NOT_NUMERIC. An empty array (detail
 *   "serieskeysonly") is no observation (skipped, reason "no measure value").
 * - Attribute values: an index into the component's `values` when it has that list, otherwise the
 *   value itself (text, number, localised object {"en": ...}, or an array of these joined by ";").
 *   null -> not set. An omitted trailing position takes the component's `default`. A data-set level
 *   attribute with exactly one value applies without an index (as data-set level dimensions do).
 *   Components whose `values` list is empty take no position in observation arrays: that is how a
 *   real OECD.Stat 1.0 response writes them (real-oecd-1.0, TIME_FORMAT with values []).
 * - Attributes of every level that applies (data set, dimension group, series, observation) are
 *   merged into RawObservation.attributes, observation level winning, as SDMX-CSV rows carry them.
 * - dimensionGroupAttributes keys list dimension indexes in presentation order (data-set level,
 *   then series, then observation dimensions): that is the order both official samples that use
 *   them follow (2.1.0 agri.json "0:0:" = FREQ, REF_AREA; constructed-sample-full "0::0::0:").
 * - Actions: Information, Append, Merge, Replace give observations. Delete gives no observations:
 *   each deleted observation or series becomes a meta.deletions entry (skip reason "deletion").
 * - A message without a time dimension (cross-sectional, e.g. real-oecd-1.0) gives period "" and
 *   meta.datasets[i].timeDimension = null.
 * - Streaming: a data set's `structure`, `action`, `attributes` and `dimensionGroupAttributes` must
 *   come before its `series`/`observations` (they do in every sample); if one comes later it is
 *   reported as SDMX_FIELD_ORDER. Data that arrive before their structure are held until it comes.
 */
import { z } from "zod";
import {
  baseOptionsShape,
  describeValueProblem,
  isDecimalText,
  ParseState,
  readJson,
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
import { jsonPath } from "./errors";
import { isParsedPeriod, parsePeriod } from "./period";
import type { SourceLocation } from "./types";

const SOURCE = "sdmx-json";

export const sdmxJsonOptionsSchema = z.strictObject({
  ...baseOptionsShape,
  /** Id of the measure to read when a 2.x structure has several. Default OBS_VALUE, else the PRIMARY role, else the first. */
  measure: z.string().min(1).optional(),
  /** Id of the time dimension. Default: the dimension with id or role TIME_PERIOD. */
  timeDimension: z.string().min(1).optional(),
  /** Language for localised attribute values ({"en": ..., "fr": ...}). Default "en", else the first given. */
  language: z.string().min(1).default("en"),
});
export type SdmxJsonOptions = z.input<typeof sdmxJsonOptionsSchema>;
type Options = z.output<typeof sdmxJsonOptionsSchema>;

type Json = unknown;
type JsonObject = Record<string, Json>;
type Level = "dataSet" | "dimensionGroup" | "series" | "observation";

function isObject(v: Json): v is JsonObject {
  return typeof v === "object" && v !== null && !Array.isArray(v);
}

/** Pick a localised text: the wanted language, else English, else the first. */
function localised(v: Json, language: string): string | undefined {
  if (typeof v === "string") return v;
  if (typeof v === "number" || typeof v === "boolean") return String(v);
  if (isObject(v)) {
    const direct = v[language] ?? v.en;
    if (typeof direct === "string") return direct;
    for (const k in v) if (typeof v[k] === "string") return v[k] as string;
  }
  return undefined;
}

interface Dim {
  id: string;
  /** Value ids by index; null where the value object has no id. */
  values: (string | null)[];
  isTime: boolean;
}

interface Attr {
  id: string;
  /** Coded: text of each value (null entries allowed). Uncoded: null. */
  values: (string | null)[] | null;
  default?: string;
  /** False when the component has an empty `values` list: no position in observation arrays. */
  positional: boolean;
}

interface Group {
  /** [presentation index of the dimension, value index] pairs. */
  positions: [number, number][];
  attributes: Record<string, string>;
  /** True when every constrained dimension is at data-set or series level. */
  seriesLevel: boolean;
}

interface Structure {
  index: number;
  path: (string | number)[];
  id?: string;
  label?: string;
  dims: Record<"dataSet" | "series" | "observation", Dim[]>;
  attrs: Record<Level, Attr[]>;
  time: { level: "dataSet" | "series" | "observation"; pos: number; dim: Dim } | null;
  /** Canonical period for each time value index; undefined until computed; null when bad. */
  periods: (string | null | undefined)[];
  measureCount: number;
  measurePos: number;
  measureValues: (string | null)[] | null;
  /** Observation-attribute positions (index into the observation array) per attrs.observation entry; -1: not positional. */
  obsAttrPos: number[];
  broken: boolean;
}

interface Pending {
  kind: "series" | "observation";
  key: string;
  value: Json;
}

interface DataSet {
  index: number;
  path: (string | number)[];
  structureIndex: number;
  action: string;
  isDelete: boolean;
  attributesRaw?: Json[];
  groupsRaw?: JsonObject;
  started: boolean;
  ctx?: Context;
  pending: Pending[];
  seriesKeys: Set<string>;
  meta: DatasetMeta;
}

/** Everything an observation of one data set needs, prepared once. */
interface Context {
  ds: DataSet;
  s: Structure;
  datasetId?: string;
  /** Data-set level dimensions (time excluded). */
  baseDims: Record<string, string>;
  baseAttrs: Record<string, string>;
  groups: Group[];
  /** Period when the time dimension is at data-set level. */
  basePeriod: string | null | undefined;
  /** Flat layout: dimension objects shared by observations with the same non-time key. */
  dimCache: Map<string, Record<string, string>>;
  /** Attribute objects shared by observations: per series-attributes object, by raw observation values. */
  attrCaches: WeakMap<object, Map<unknown, Record<string, string>>>;
}

const ACTIONS = new Set(["Information", "Append", "Merge", "Replace", "Delete"]);
const DATASET_FIELDS = [
  "action",
  "structure",
  "attributes",
  "dimensionGroupAttributes",
  "validFrom",
  "validTo",
  "reportingBegin",
  "reportingEnd",
  "publicationYear",
  "publicationPeriod",
  "links",
];
const ORDER_SENSITIVE = new Set(["action", "structure", "attributes", "dimensionGroupAttributes"]);
const UNIT_ATTRIBUTES = new Set(["UNIT_MEASURE", "UNIT_MULT", "BASE_PER", "UNIT"]);

function paths(): string[] {
  const out = ["$.$schema", "$.header", "$.meta", "$.errors", "$.structure", "$.data.structure", "$.data.structures.*"];
  for (const prefix of ["$.dataSets.*", "$.data.dataSets.*"]) {
    for (const f of DATASET_FIELDS) out.push(`${prefix}.${f}`);
    out.push(`${prefix}.series.*`, `${prefix}.observations.*`);
  }
  return out;
}
const PATHS = paths();

/** Dataflow id from a structure/dataset link: URN "…Dataflow=ECB:EXR(1.0)" -> "ECB:EXR(1.0)". */
function idFromLinks(links: Json): string | undefined {
  if (!Array.isArray(links)) return undefined;
  const ordered = [...links].sort((a, b) => rank(a) - rank(b));
  for (const l of ordered) {
    if (!isObject(l)) continue;
    if (typeof l.urn === "string") {
      const m = /=([^=]+)$/.exec(l.urn);
      if (m) return m[1];
    }
    if (typeof l.href === "string") {
      const m = /\/(?:dataflow|datastructure|provisionagreement)\/(.+)$/.exec(l.href);
      if (m) {
        const parts = m[1]!.split("/").filter(Boolean);
        if (parts.length >= 3 && /^\d/.test(parts[2]!)) return `${parts[0]}:${parts[1]}(${parts[2]})`;
        return parts[0];
      }
    }
  }
  return undefined;
  function rank(l: Json): number {
    const rel = isObject(l) ? l.rel : undefined;
    return rel === "dataflow" ? 0 : rel === "provisionagreement" ? 1 : rel === "datastructure" ? 2 : 3;
  }
}

class SdmxJsonReader {
  private readonly state: ParseState;
  private readonly opts: Options;
  private readonly sink: ObservationSink;
  private readonly structures: (Structure | undefined)[] = [];
  private readonly datasets: DataSet[] = [];
  private readonly duplicates = new Map<string, Set<string>>();
  private hasData = false;

  constructor(state: ParseState, opts: Options, sink: ObservationSink) {
    this.state = state;
    this.opts = opts;
    this.sink = sink;
  }

  // -- events --------------------------------------------------------------------------------

  onValue(path: (string | number)[], key: string | number | undefined, value: Json): void {
    const inData = path[0] === "data" ? 1 : 0;
    const depth = path.length - inData;
    if (path.length === 0) {
      if (key === "header" || key === "meta") this.onHeader(value);
      else if (key === "$schema") this.onSchema(value);
      else if (key === "errors") this.onErrors(value);
      else if (key === "structure") this.onStructure(0, ["structure"], value);
      return;
    }
    if (inData && depth === 0) {
      if (key === "structure") this.onStructure(0, ["data", "structure"], value);
      return;
    }
    if (inData && depth === 1 && path[1] === "structures" && typeof key === "number") {
      this.onStructure(key, ["data", "structures", key], value);
      return;
    }
    if (path[inData] !== "dataSets") return;
    const dsIndex = path[inData + 1];
    if (typeof dsIndex !== "number") return;
    const ds = this.dataset(dsIndex, path.slice(0, inData + 2));
    if (depth === 2 && typeof key === "string") {
      this.onDataSetField(ds, key, value);
    } else if (depth === 3 && typeof key === "string") {
      const level = path[inData + 2];
      if (level === "series") this.onItem(ds, { kind: "series", key, value });
      else if (level === "observations") this.onItem(ds, { kind: "observation", key, value });
    }
  }

  private onSchema(v: Json): void {
    if (typeof v !== "string") return;
    const m = /\/(\d+\.\d+(?:\.\d+)?)\//.exec(v) ?? /json\.sdmx\.org\/(\d+\.\d+)/.exec(v);
    if (m) this.state.meta.version = m[1]!.split(".").length === 2 && m[1] !== "1.0" ? `${m[1]}.0` : m[1];
  }

  private onHeader(v: Json): void {
    if (!isObject(v)) return;
    const meta = this.state.meta;
    if (typeof v.id === "string") meta.messageId = v.id;
    if (typeof v.prepared === "string") meta.prepared = v.prepared;
    if (isObject(v.sender) && typeof v.sender.id === "string") meta.sender = v.sender.id;
    if (typeof v.schema === "string" && !meta.version) this.onSchema(v.schema);
  }

  private onErrors(v: Json): void {
    if (!Array.isArray(v)) return;
    for (const e of v) {
      if (!isObject(e)) continue;
      const entry: { code?: number | string; title?: string; detail?: string } = {};
      if (typeof e.code === "number" || typeof e.code === "string") entry.code = e.code;
      const title = localised(e.title ?? e.titles, this.opts.language);
      if (title) entry.title = title;
      const detail = localised(e.detail ?? e.details, this.opts.language);
      if (detail) entry.detail = detail;
      this.state.meta.serviceErrors.push(entry);
    }
  }

  private dataset(index: number, path: (string | number)[]): DataSet {
    let ds = this.datasets[index];
    if (!ds) {
      const meta: DatasetMeta = {};
      ds = {
        index,
        path,
        structureIndex: 0,
        action: "Information",
        isDelete: false,
        started: false,
        pending: [],
        seriesKeys: new Set(),
        meta,
      };
      this.datasets[index] = ds;
      this.state.meta.datasets[index] = meta;
    }
    return ds;
  }

  private onDataSetField(ds: DataSet, field: string, value: Json): void {
    const loc: SourceLocation = { path: jsonPath([...ds.path, field]) };
    if (ds.started && ORDER_SENSITIVE.has(field)) {
      this.state.report(
        "SDMX_FIELD_ORDER",
        loc,
        `'${field}' of this data set comes after its observations; a streaming reader has already used the default. Put it before 'series'/'observations'.`,
      );
      return;
    }
    switch (field) {
      case "action":
        if (typeof value === "string") {
          if (!ACTIONS.has(value)) {
            this.state.report("SDMX_UNKNOWN_ACTION", loc, `action '${value}' is not Information, Append, Merge, Replace or Delete; read as Merge`, value);
            ds.action = "Merge";
          } else ds.action = value;
          ds.isDelete = ds.action === "Delete";
          ds.meta.action = ds.action;
        }
        break;
      case "structure":
        if (typeof value === "number" && Number.isInteger(value) && value >= 0) ds.structureIndex = value;
        else this.state.report("JSON_UNEXPECTED_SHAPE", loc, "a data set's 'structure' must be the index of a structure", value);
        break;
      case "attributes":
        if (Array.isArray(value)) ds.attributesRaw = value;
        break;
      case "dimensionGroupAttributes":
        if (isObject(value)) ds.groupsRaw = value;
        break;
      case "validFrom":
      case "validTo":
      case "reportingBegin":
      case "reportingEnd":
        if (typeof value === "string") ds.meta[field] = value;
        break;
      case "links": {
        const id = idFromLinks(value);
        if (id && !ds.meta.id) ds.meta.id = id;
        break;
      }
      default:
        break;
    }
  }

  private onItem(ds: DataSet, item: Pending): void {
    this.hasData = true;
    if (!ds.ctx) {
      const s = this.structures[ds.structureIndex];
      if (!s) {
        ds.pending.push(item);
        return;
      }
      ds.ctx = this.prepare(ds, s);
    }
    ds.started = true;
    this.process(ds.ctx, item);
  }

  private onStructure(index: number, path: (string | number)[], value: Json): void {
    const s = this.compile(index, path, value);
    this.structures[index] = s;
    for (const ds of this.datasets) {
      if (ds && !ds.ctx && ds.pending.length && ds.structureIndex === index) {
        ds.ctx = this.prepare(ds, s);
        ds.started = true;
        const items = ds.pending;
        ds.pending = [];
        for (const item of items) this.process(ds.ctx, item);
      }
    }
  }

  finish(): void {
    const live = this.datasets.filter((d) => d && !d.isDelete && d.started).length;
    if (live > 1) {
      this.state.note("the message has several data sets: SDMX processes them in order, so an observation in a later data set updates the same one in an earlier data set");
    }
    for (const ds of this.datasets) {
      if (!ds || !ds.pending.length) continue;
      this.state.report(
        "SDMX_MISSING_STRUCTURE",
        { path: jsonPath([...ds.path, "structure"]) },
        `data set ${ds.index} refers to structure ${ds.structureIndex}, which the message does not contain`,
        ds.structureIndex,
      );
      let n = 0;
      for (const p of ds.pending) n += p.kind === "series" && isObject(p.value) && isObject(p.value.observations) ? Object.keys(p.value.observations).length : 1;
      this.state.skip("issue", n);
      ds.pending = [];
    }
    if (!this.hasData && this.state.meta.serviceErrors.length) {
      const e = this.state.meta.serviceErrors[0]!;
      this.state.report(
        "SDMX_SERVICE_ERROR",
        { path: "$.errors[0]" },
        `the service answered with an error${e.code !== undefined ? ` ${e.code}` : ""}: ${e.title ?? e.detail ?? "(no text)"}`,
        e.code,
      );
    }
  }

  /** The version when the message did not state it: data.structures means 2.x, a single structure 1.0. */
  inferVersion(sawStructures: boolean): void {
    if (!this.state.meta.version) this.state.meta.version = sawStructures ? "2.x" : "1.0";
  }

  // -- structure -----------------------------------------------------------------------------

  private compile(index: number, path: (string | number)[], raw: Json): Structure {
    const lang = this.opts.language;
    const s: Structure = {
      index,
      path,
      dims: { dataSet: [], series: [], observation: [] },
      attrs: { dataSet: [], dimensionGroup: [], series: [], observation: [] },
      time: null,
      periods: [],
      measureCount: 1,
      measurePos: 0,
      measureValues: null,
      obsAttrPos: [],
      broken: false,
    };
    if (!isObject(raw)) {
      this.state.report("JSON_UNEXPECTED_SHAPE", { path: jsonPath(path) }, "a structure must be an object");
      s.broken = true;
      return s;
    }
    s.id = idFromLinks(raw.links);
    s.label = localised(raw.name ?? raw.names, lang);
    const dims = isObject(raw.dimensions) ? raw.dimensions : {};
    if (!isObject(raw.dimensions)) {
      this.state.report("SDMX_MISSING_DIMENSION", { path: jsonPath([...path, "dimensions"]) }, "the structure has no 'dimensions'");
      s.broken = true;
    }
    const wantedTime = this.opts.timeDimension;
    for (const level of ["dataSet", "series", "observation"] as const) {
      const list = dims[level] ?? (level === "dataSet" ? dims.dataset : undefined);
      if (list === undefined) continue;
      if (!Array.isArray(list)) continue;
      list.forEach((d, pos) => {
        const dpath = [...path, "dimensions", level, pos];
        if (!isObject(d) || typeof d.id !== "string") {
          this.state.report("SDMX_MISSING_DIMENSION", { path: jsonPath(dpath) }, "a dimension without an id");
          s.broken = true;
          return;
        }
        const roles = Array.isArray(d.roles) ? d.roles : Array.isArray(d.role) ? d.role : typeof d.role === "string" ? [d.role] : [];
        const isTime = wantedTime ? d.id === wantedTime : d.id === "TIME_PERIOD" || roles.includes("TIME_PERIOD");
        const values: (string | null)[] = [];
        if (Array.isArray(d.values)) {
          d.values.forEach((v, vi) => {
            const id = isObject(v) ? (typeof v.id === "string" ? v.id : typeof v.value === "string" || typeof v.value === "number" ? String(v.value) : null) : null;
            if (id === null) {
              this.state.report("SDMX_MISSING_DIMENSION", { path: jsonPath([...dpath, "values", vi]), field: d.id as string }, `a value of dimension ${d.id} has no id`);
            }
            values.push(id);
          });
        }
        const dim: Dim = { id: d.id, values, isTime };
        if (isTime && !s.time) s.time = { level, pos: s.dims[level].length, dim };
        s.dims[level].push(dim);
      });
    }
    const attrs = isObject(raw.attributes) ? raw.attributes : {};
    for (const level of ["dataSet", "dimensionGroup", "series", "observation"] as const) {
      const list = attrs[level] ?? (level === "dataSet" ? attrs.dataset : undefined);
      if (!Array.isArray(list)) continue;
      for (const a of list) {
        if (!isObject(a) || typeof a.id !== "string") continue;
        let values: (string | null)[] | null = null;
        if (Array.isArray(a.values)) {
          values = a.values.map((v) => (v === null ? null : attrValueText(v, lang)));
        }
        const attr: Attr = { id: a.id, values, positional: !(values !== null && values.length === 0) };
        if (typeof a.default === "string" || typeof a.default === "number") attr.default = String(a.default);
        s.attrs[level].push(attr);
      }
    }
    const measures = isObject(raw.measures) && Array.isArray(raw.measures.observation) ? raw.measures.observation : null;
    if (measures) {
      s.measureCount = measures.length;
      let pos = -1;
      const want = this.opts.measure;
      measures.forEach((m, i) => {
        if (!isObject(m)) return;
        const roles = Array.isArray(m.roles) ? m.roles : [];
        if (want ? m.id === want : pos < 0 && (m.id === "OBS_VALUE" || roles.includes("PRIMARY"))) pos = i;
      });
      if (want && pos < 0) {
        this.state.report("SDMX_MISSING_DIMENSION", { path: jsonPath([...path, "measures", "observation"]), field: want }, `measure '${want}' is not in the structure`);
      }
      s.measurePos = pos >= 0 ? pos : 0;
      const chosen = measures[s.measurePos];
      if (isObject(chosen) && Array.isArray(chosen.values)) s.measureValues = chosen.values.map((v) => (v === null ? null : attrValueText(v, lang)));
    }
    let p = s.measureCount;
    s.obsAttrPos = s.attrs.observation.map((a) => (a.positional ? p++ : -1));
    return s;
  }

  /** Canonical period of time value `index`, reporting a bad one once. null: unusable. */
  private period(s: Structure, index: number): string | null {
    const cached = s.periods[index];
    if (cached !== undefined) return cached;
    const t = s.time!;
    const text = t.dim.values[index];
    let out: string | null = null;
    if (text === undefined || text === null) {
      out = null;
    } else {
      const p = parsePeriod(text);
      if (isParsedPeriod(p)) out = p.canonical;
      else {
        this.state.report(
          p.problem,
          { path: jsonPath([...s.path, "dimensions", t.level, t.pos, "values", index, "id"]), field: t.dim.id },
          p.reason,
          text,
        );
      }
    }
    s.periods[index] = out;
    return out;
  }

  // -- data ----------------------------------------------------------------------------------

  private prepare(ds: DataSet, s: Structure): Context {
    const baseDims: Record<string, string> = {};
    let basePeriod: string | null | undefined;
    s.dims.dataSet.forEach((d, pos) => {
      const v = d.values[0];
      if (d.values.length !== 1 || v === null || v === undefined) {
        this.state.report(
          "SDMX_MISSING_DIMENSION",
          { path: jsonPath([...s.path, "dimensions", "dataSet", pos, "values"]), field: d.id },
          `dimension ${d.id} is at data-set level but has ${d.values.length} values instead of 1`,
        );
        return;
      }
      if (d.isTime) basePeriod = this.period(s, 0);
      else baseDims[d.id] = v;
    });
    const datasetId = ds.meta.id ?? s.id;
    if (datasetId) ds.meta.id = datasetId;
    if (s.label && !ds.meta.label) ds.meta.label = s.label;
    ds.meta.timeDimension = s.time ? s.time.dim.id : null;
    if (!s.time) this.state.note("the structure has no time dimension (no TIME_PERIOD): observations have period \"\"");
    // Data-set level attributes.
    const baseAttrs: Record<string, string> = {};
    s.attrs.dataSet.forEach((a, i) => {
      let raw: Json = ds.attributesRaw ? ds.attributesRaw[i] : undefined;
      if (raw === undefined && !ds.attributesRaw && a.values && a.values.length === 1) raw = 0;
      const v = this.resolveAttr(a, raw, { path: jsonPath([...ds.path, "attributes", i]), field: a.id });
      if (v !== undefined) baseAttrs[a.id] = v;
    });
    if (Object.keys(baseAttrs).length) {
      ds.meta.attributes = { ...baseAttrs };
      const units: Record<string, string> = {};
      for (const k in baseAttrs) if (UNIT_ATTRIBUTES.has(k)) units[k] = baseAttrs[k]!;
      if (Object.keys(units).length) ds.meta.units = { "*": units };
    }
    // Dimension groups.
    const groups: Group[] = [];
    if (ds.groupsRaw) {
      const all = [...s.dims.dataSet, ...s.dims.series, ...s.dims.observation];
      const seriesLimit = s.dims.dataSet.length + s.dims.series.length;
      for (const gk in ds.groupsRaw) {
        const gpath = [...ds.path, "dimensionGroupAttributes", gk];
        const parts = gk.split(":");
        if (parts.length !== all.length) {
          this.state.report(
            "SDMX_KEY_LENGTH_MISMATCH",
            { path: jsonPath(gpath) },
            `dimension-group key '${gk}' has ${parts.length} positions, the structure has ${all.length} dimensions`,
            gk,
          );
          continue;
        }
        const positions: [number, number][] = [];
        let bad = false;
        parts.forEach((p, i) => {
          if (p === "") return;
          const n = Number(p);
          if (!Number.isInteger(n) || n < 0 || n >= all[i]!.values.length) {
            this.state.report("SDMX_INDEX_OUT_OF_RANGE", { path: jsonPath(gpath), field: all[i]!.id }, `index ${p} is outside the ${all[i]!.values.length} values of ${all[i]!.id}`, p);
            bad = true;
          }
          positions.push([i, n]);
        });
        if (bad) continue;
        const rawValues = ds.groupsRaw[gk];
        const attributes: Record<string, string> = {};
        if (Array.isArray(rawValues)) {
          s.attrs.dimensionGroup.forEach((a, i) => {
            const v = this.resolveAttr(a, rawValues[i], { path: jsonPath([...gpath, i]), field: a.id });
            if (v !== undefined) attributes[a.id] = v;
          });
        }
        groups.push({ positions, attributes, seriesLevel: positions.every(([i]) => i < seriesLimit) });
      }
    }
    return { ds, s, datasetId, baseDims, baseAttrs, groups, basePeriod, dimCache: new Map(), attrCaches: new WeakMap() };
  }

  /** Attribute value text, undefined when not set. Reports an index out of range. */
  private resolveAttr(a: Attr, raw: Json, loc: SourceLocation): string | undefined {
    if (raw === undefined) return a.default;
    if (raw === null) return undefined;
    if (a.values) {
      if (typeof raw === "number") {
        const v = a.values[raw];
        if (v === undefined) {
          this.state.report("SDMX_INDEX_OUT_OF_RANGE", loc, `index ${raw} is outside the ${a.values.length} values of attribute ${a.id}`, raw);
          return undefined;
        }
        return v ?? undefined;
      }
      if (Array.isArray(raw)) {
        const parts: string[] = [];
        for (const r of raw) {
          const t = this.resolveAttr(a, r, loc);
          if (t !== undefined) parts.push(t);
        }
        return parts.length ? parts.join(";") : undefined;
      }
    }
    return attrValueText(raw, this.opts.language) ?? undefined;
  }

  private process(ctx: Context, item: Pending): void {
    if (ctx.s.broken) {
      this.state.skip("issue");
      return;
    }
    if (item.kind === "series") this.processSeries(ctx, item.key, item.value);
    else this.processFlat(ctx, item.key, item.value);
  }

  private keyIndexes(ctx: Context, key: string, dims: Dim[], where: (string | number)[]): number[] | null {
    const parts = dims.length === 0 && (key === "" || key === "0") ? [] : key.split(":");
    if (parts.length !== dims.length) {
      this.state.report(
        "SDMX_KEY_LENGTH_MISMATCH",
        { path: jsonPath(where) },
        `key '${key}' has ${parts.length} position(s) but ${dims.length} dimension(s) are presented at this level (${dims.map((d) => d.id).join(", ")})`,
        key,
      );
      return null;
    }
    const out = new Array<number>(parts.length);
    for (let i = 0; i < parts.length; i++) {
      const p = parts[i]!;
      const n = Number(p);
      const d = dims[i]!;
      if (p === "" || !Number.isInteger(n) || n < 0 || n >= d.values.length) {
        this.state.report(
          "SDMX_INDEX_OUT_OF_RANGE",
          { path: jsonPath(where), field: d.id },
          `key '${key}': index ${p === "" ? "(empty)" : p} is outside the ${d.values.length} values of ${d.id}`,
          key,
        );
        return null;
      }
      if (d.values[n] === null) return null; // reported when the structure was read
      out[i] = n;
    }
    return out;
  }

  private processSeries(ctx: Context, key: string, series: Json): void {
    const { s, ds } = ctx;
    const where = [...ds.path, "series", key];
    if (ds.seriesKeys.has(key)) {
      this.state.report("JSON_DUPLICATE_KEY", { path: jsonPath(where) }, `series '${key}' appears twice in this data set`, key);
    }
    ds.seriesKeys.add(key);
    if (!isObject(series)) {
      this.state.report("JSON_UNEXPECTED_SHAPE", { path: jsonPath(where) }, "a series must be an object");
      this.state.skip("issue");
      return;
    }
    const obs = series.observations;
    const obsCount = isObject(obs) ? Object.keys(obs).length : 0;
    const idx = this.keyIndexes(ctx, key, s.dims.series, where);
    if (!idx) {
      this.state.skip("issue", Math.max(1, obsCount));
      return;
    }
    // Series dimensions and (cross-section) a series-level period.
    const dims: Record<string, string> = { ...ctx.baseDims };
    let seriesPeriod: string | null | undefined = ctx.basePeriod;
    s.dims.series.forEach((d, i) => {
      if (d.isTime) seriesPeriod = this.period(s, idx[i]!);
      else dims[d.id] = d.values[idx[i]!]!;
    });
    // Series attributes: data set, matching dimension groups, series level.
    let attrs = ctx.baseAttrs;
    const coords = this.coordsPrefix(ctx, idx);
    const obsGroups: Group[] = [];
    if (ctx.groups.length || s.attrs.series.length) {
      attrs = { ...ctx.baseAttrs };
      for (const g of ctx.groups) {
        if (g.seriesLevel) {
          if (matches(g, coords)) Object.assign(attrs, g.attributes);
        } else obsGroups.push(g);
      }
      const rawAttrs = Array.isArray(series.attributes) ? series.attributes : [];
      s.attrs.series.forEach((a, i) => {
        const v = this.resolveAttr(a, rawAttrs[i], { path: jsonPath([...where, "attributes", i]), field: a.id });
        if (v !== undefined) attrs[a.id] = v;
      });
    }
    if (ds.isDelete) {
      if (!isObject(obs) || obsCount === 0) {
        this.addDeletion(ctx, dims, seriesPeriod ?? undefined, where);
        return;
      }
    }
    if (!isObject(obs)) {
      this.state.skip("no observations");
      return;
    }
    const seriesUid = `${ds.index}\u0000${key}`;
    const obsDims = s.dims.observation;
    this.emitObservations(ctx, obs, dims, attrs, seriesPeriod, coords, obsGroups, seriesUid, [...where, "observations"], obsDims, coords.length - obsDims.length);
  }

  /** Coordinates (value index per presentation dimension) known at series level; obs part filled later. */
  private coordsPrefix(ctx: Context, seriesIdx: number[]): number[] {
    const s = ctx.s;
    const coords = new Array<number>(s.dims.dataSet.length + s.dims.series.length + s.dims.observation.length).fill(-1);
    for (let i = 0; i < s.dims.dataSet.length; i++) coords[i] = 0;
    for (let i = 0; i < seriesIdx.length; i++) coords[s.dims.dataSet.length + i] = seriesIdx[i]!;
    return coords;
  }

  /**
   * One observation of the flat layout. Its key lists the observation-level dimensions; when the
   * structure also declares series-level dimensions (2.1.0 constructed-sample-full reuses one
   * structure for both layouts), a key with series + observation positions is read in that order.
   */
  private processFlat(ctx: Context, key: string, value: Json): void {
    const { ds, s } = ctx;
    const coords = this.coordsPrefix(ctx, []);
    let keyDims = s.dims.observation;
    let first = s.dims.dataSet.length + s.dims.series.length;
    if (s.dims.series.length) {
      let parts = 1;
      for (let i = 0; i < key.length; i++) if (key.charCodeAt(i) === 58) parts++;
      if (parts === s.dims.series.length + s.dims.observation.length) {
        keyDims = [...s.dims.series, ...s.dims.observation];
        first = s.dims.dataSet.length;
      }
    }
    const single: Record<string, Json> = { [key]: value };
    this.emitObservations(ctx, single, ctx.baseDims, ctx.baseAttrs, ctx.basePeriod, coords, ctx.groups, `${ds.index}\u0000`, [...ds.path, "observations"], keyDims, first);
  }

  /**
   * The hot loop: observations of one series (or one flat observation). `where` is the path of the
   * series (or of the data set's observations map when `flat`).
   */
  private emitObservations(
    ctx: Context,
    observations: Record<string, Json>,
    seriesDims: Record<string, string>,
    seriesAttrs: Record<string, string>,
    seriesPeriod: string | null | undefined,
    coords: number[],
    obsGroups: Group[],
    seriesUid: string,
    obsPath: (string | number)[],
    obsDims: Dim[],
    firstObsCoord: number,
  ): void {
    const { s, ds } = ctx;
    const state = this.state;
    const opts = this.opts;
    const nObsDims = obsDims.length;
    const single = nObsDims === 1 ? obsDims[0]! : null;
    const singleIsTime = single !== null && single.isTime;
    const obsAttrs = s.attrs.observation;
    const obsAttrPos = s.obsAttrPos;
    const measurePos = s.measurePos;
    const measureCount = s.measureCount;
    const nonNegative = opts.nonNegative;
    const checkDup = opts.checkDuplicates && !ds.isDelete;
    const withLocations = opts.locations;
    const datasetId = ctx.datasetId;
    const noTime = s.time === null;
    let seriesDup: Set<string> | undefined;
    let attrCache: Map<unknown, Record<string, string>> | null = null;
    if (obsAttrs.length) {
      attrCache = ctx.attrCaches.get(seriesAttrs) ?? null;
      if (!attrCache) ctx.attrCaches.set(seriesAttrs, (attrCache = new Map()));
    }
    const fastAttrPos = obsAttrs.length === 1 && obsGroups.length === 0 ? obsAttrPos[0]! : -1;

    for (const k in observations) {
      const arr = observations[k];
      let dims = seriesDims;
      let period: string | null | undefined = seriesPeriod;
      let dupId = seriesUid;
      // Observation key.
      if (singleIsTime) {
        const n = +k;
        if (!(n >= 0 && n < single!.values.length && Number.isInteger(n)) || k === "") {
          this.keyIndexes(ctx, k, obsDims, [...obsPath, k]);
          state.skip("issue");
          continue;
        }
        period = this.period(s, n);
        coords[firstObsCoord] = n;
      } else if (nObsDims > 0) {
        const idx = this.keyIndexes(ctx, k, obsDims, [...obsPath, k]);
        if (!idx) {
          state.skip("issue");
          continue;
        }
        let cacheKey = "";
        for (let i = 0; i < nObsDims; i++) {
          const d = obsDims[i]!;
          coords[firstObsCoord + i] = idx[i]!;
          if (d.isTime) period = this.period(s, idx[i]!);
          else cacheKey += `${idx[i]}:`;
        }
        if (cacheKey) {
          const cacheId = `${seriesUid}\u0001${cacheKey}`;
          dupId = cacheId;
          let cached = ctx.dimCache.get(cacheId);
          if (!cached) {
            cached = { ...seriesDims };
            for (let i = 0; i < nObsDims; i++) {
              const d = obsDims[i]!;
              if (!d.isTime) cached[d.id] = d.values[idx[i]!]!;
            }
            if (ctx.dimCache.size > 100_000) ctx.dimCache.clear();
            ctx.dimCache.set(cacheId, cached);
          }
          dims = cached;
        }
      }
      if (period === null) {
        state.skip("issue"); // bad period, reported once at the structure
        continue;
      }
      const periodText = noTime || period === undefined ? "" : period;
      if (!Array.isArray(arr)) {
        state.report("JSON_UNEXPECTED_SHAPE", { path: jsonPath([...obsPath, k]) }, "an observation must be an array", arr);
        state.skip("issue");
        continue;
      }
      if (ds.isDelete) {
        this.addDeletion(ctx, dims, periodText || undefined, [...obsPath, k], arr);
        continue;
      }
      // Measure.
      if (arr.length <= measurePos || measureCount === 0) {
        state.skip("no measure value");
        continue;
      }
      let raw = arr[measurePos];
      if (s.measureValues && typeof raw === "number") raw = s.measureValues[raw] ?? raw;
      let value: number | null;
      if (typeof raw === "number") {
        value = raw;
        const problem = valueProblem(raw, nonNegative);
        if (problem !== null) {
          state.report(problem, { path: jsonPath([...obsPath, k, measurePos]) }, describeValueProblem(problem, raw), raw);
          state.skip("issue");
          continue;
        }
      } else if (raw === null) {
        value = null;
      } else if (typeof raw === "string") {
        const t = raw.trim();
        if (t === "NaN") value = null;
        else {
          const n = t === "" ? NaN : Number(t);
          if (Number.isNaN(n) || !isDecimalText(t)) {
            state.report("SDMX_VALUE_NOT_NUMERIC", { path: jsonPath([...obsPath, k, measurePos]) }, `${quote(raw)} is not a number`, raw);
            state.skip("issue");
            continue;
          }
          const problem = valueProblem(n, nonNegative);
          if (problem !== null) {
            state.report(problem, { path: jsonPath([...obsPath, k, measurePos]) }, describeValueProblem(problem, raw), raw);
            state.skip("issue");
            continue;
          }
          value = n;
        }
      } else {
        state.report("SDMX_VALUE_NOT_NUMERIC", { path: jsonPath([...obsPath, k, measurePos]) }, `${quote(raw)} is not a number`, raw);
        state.skip("issue");
        continue;
      }
      // Observation attributes: objects shared between observations with the same raw values.
      let attributes = seriesAttrs;
      if (attrCache !== null || obsGroups.length) {
        let cacheKey: unknown;
        if (fastAttrPos >= 0) {
          const e = arr[fastAttrPos];
          cacheKey = typeof e === "object" && e !== null ? JSON.stringify(e) : e;
        } else {
          let text = "";
          if (attrCache !== null) {
            for (let i = 0; i < obsAttrPos.length; i++) {
              const p = obsAttrPos[i]!;
              const e = p >= 0 ? arr[p] : undefined;
              text += typeof e === "number" ? `${e}|` : e === undefined ? "u|" : e === null ? "n|" : `${JSON.stringify(e)}|`;
            }
          }
          for (const g of obsGroups) text += matches(g, coords) ? "1" : "0";
          cacheKey = text;
        }
        let cached = attrCache?.get(cacheKey);
        if (!cached) {
          const issuesBefore = state.collector.count;
          cached = { ...seriesAttrs };
          for (const g of obsGroups) if (matches(g, coords)) Object.assign(cached, g.attributes);
          for (let i = 0; i < obsAttrs.length; i++) {
            const a = obsAttrs[i]!;
            const p = obsAttrPos[i]!;
            const v = this.resolveAttr(a, p >= 0 ? arr[p] : undefined, { path: jsonPath([...obsPath, k, p]), field: a.id });
            if (v !== undefined) cached[a.id] = v;
          }
          // Values that raised an issue are not cached, so every observation carrying them is reported.
          if (attrCache && state.collector.count === issuesBefore && attrCache.size < 1000) attrCache.set(cacheKey, cached);
        }
        attributes = cached;
      }
      // Duplicates (same dimensions + period twice in the payload).
      if (checkDup) {
        let set: Set<string> | undefined;
        if (dupId === seriesUid) {
          if (!seriesDup) {
            seriesDup = this.duplicates.get(seriesUid);
            if (!seriesDup) this.duplicates.set(seriesUid, (seriesDup = new Set()));
          }
          set = seriesDup;
        } else {
          set = this.duplicates.get(dupId);
          if (!set) this.duplicates.set(dupId, (set = new Set()));
        }
        if (set.has(periodText)) {
          state.report(
            "DUPLICATE_OBSERVATION",
            { path: jsonPath([...obsPath, k]) },
            `the observation ${describeKey(dims, periodText)} appears more than once in this data set`,
            k,
          );
          state.skip("issue");
          continue;
        }
        set.add(periodText);
      }
      const o: ParsedObservation =
        datasetId === undefined
          ? withLocations
            ? { dimensions: dims, period: periodText, value, attributes, location: { path: jsonPath([...obsPath, k]) } }
            : { dimensions: dims, period: periodText, value, attributes }
          : withLocations
            ? { dimensions: dims, period: periodText, value, attributes, dataset: datasetId, location: { path: jsonPath([...obsPath, k]) } }
            : { dimensions: dims, period: periodText, value, attributes, dataset: datasetId };
      state.counts.observations++;
      this.sink(o);
    }
  }

  private addDeletion(ctx: Context, dims: Record<string, string>, period: string | undefined, where: (string | number)[], arr?: Json[]): void {
    const components: string[] = [];
    if (arr && arr.length) {
      if (arr[ctx.s.measurePos] !== undefined && arr[ctx.s.measurePos] !== null) components.push("OBS_VALUE");
      ctx.s.attrs.observation.forEach((a, i) => {
        const p = ctx.s.obsAttrPos[i]!;
        if (p >= 0 && arr[p] !== undefined && arr[p] !== null) components.push(a.id);
      });
    }
    const d: { dataset?: string; dimensions: Record<string, string>; period?: string; components: string[]; location: SourceLocation } = {
      dimensions: dims,
      components,
      location: { path: jsonPath(where) },
    };
    if (ctx.datasetId) d.dataset = ctx.datasetId;
    if (period) d.period = period;
    this.state.meta.deletions.push(d);
    this.state.skip("deletion");
  }
}

function matches(g: Group, coords: number[]): boolean {
  for (const [i, v] of g.positions) if (coords[i] !== v) return false;
  return true;
}

function describeKey(dims: Record<string, string>, period: string): string {
  const parts = Object.entries(dims).map(([k, v]) => `${k}=${v}`);
  if (period) parts.push(`period=${period}`);
  return parts.join(", ");
}

function quote(v: Json): string {
  return typeof v === "string" ? `'${v.length > 60 ? `${v.slice(0, 57)}...` : v}'` : JSON.stringify(v);
}

/** Text of a component value object or raw attribute value. */
function attrValueText(v: Json, lang: string): string | null {
  if (v === null || v === undefined) return null;
  if (typeof v === "string") return v;
  if (typeof v === "number" || typeof v === "boolean") return String(v);
  if (Array.isArray(v)) {
    const parts = v.map((x) => attrValueText(x, lang)).filter((x): x is string => x !== null);
    return parts.length ? parts.join(";") : null;
  }
  if (isObject(v)) {
    if (typeof v.id === "string") return v.id;
    if (typeof v.value === "string" || typeof v.value === "number") return String(v.value);
    if (Array.isArray(v.values)) return attrValueText(v.values, lang);
    if (v.value !== undefined && isObject(v.value)) return localised(v.value, lang) ?? null;
    if (v.name !== undefined || v.names !== undefined) return localised(v.name ?? v.names, lang) ?? null;
    return localised(v, lang) ?? null;
  }
  return null;
}

/**
 * Parse an SDMX-JSON data message from a stream, handing each observation to `onObservation` as
 * soon as it is read. Options are validated before the first byte is read (OPTIONS_INVALID).
 *
 * Strict mode throws the first IngestError; collect mode returns every problem in `issues`.
 * Memory stays flat for messages whose structure precedes their data (the usual order).
 *
 * Example: parseSdmxJsonStream(createReadStream("exr.json"), { mode: "collect" }, (o) => rows.push(o))
 *
 * Reference: SDMX-JSON data message field guide 1.0 and 2.1.0 (sdmx-twg/sdmx-json).
 */
export async function parseSdmxJsonStream(input: PayloadInput, options: SdmxJsonOptions | undefined, onObservation: ObservationSink, control: StreamControl = {}): Promise<ParseSummary> {
  const opts = validateSdmxJsonOptions(options);
  const state = new ParseState("sdmx-json", SOURCE, opts);
  state.afterChunk = control.afterChunk;
  const reader = new SdmxJsonReader(state, opts, onObservation);
  let sawStructures = false;
  let sawAnything = false;
  const ok = await readJson(input, state, {
    paths: PATHS,
    onValue: (e) => {
      sawAnything = true;
      if (e.path[0] === "data" && e.path[1] === "structures") sawStructures = true;
      reader.onValue(e.path, e.key, e.value);
    },
    // Duplicate member names matter where they lose data: inside dataSets. The large series and
    // observations maps are checked member by member by the reader. Structural metadata repeats
    // are tolerated as JSON.parse does (1.0 exr-cross-section.json repeats "keyPosition").
    skipKeyCheck: (names) => {
      const n = names.length;
      if (!names.includes("dataSets")) return true;
      return n >= 3 && (names[n - 1] === "series" || names[n - 1] === "observations") && names[n - 3] === "dataSets";
    },
  });
  if (ok) {
    reader.finish();
    reader.inferVersion(sawStructures);
    if (!sawAnything && !state.meta.serviceErrors.length) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: "$" }, "this JSON is not an SDMX-JSON data message (no header/meta, structure or dataSets)");
    }
  }
  return state.summary();
}

/** Parse a whole SDMX-JSON data message and return the observations with the summary. */
export async function parseSdmxJson(input: PayloadInput, options?: SdmxJsonOptions): Promise<ParseResult> {
  const observations: ParsedObservation[] = [];
  const summary = await parseSdmxJsonStream(input, options, (o) => observations.push(o));
  return { observations, ...summary };
}

/** Validate SDMX-JSON options (throws OPTIONS_INVALID naming the option). */
export function validateSdmxJsonOptions(options: SdmxJsonOptions | undefined): Options {
  return validateOptions(sdmxJsonOptionsSchema, options, SOURCE);
}
