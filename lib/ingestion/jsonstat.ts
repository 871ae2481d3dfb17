/**
 * JSON-stat 2.0 datasets and collections to observations.
 *
 * Reading rules (JSON-stat 2.0 format, json-stat.org/format):
 * - `id` lists the dimensions, `size` their category counts, `value` holds the cells in row-major
 *   order ("what does not change, first": the last dimension varies fastest), as a dense array
 *   or a sparse object keyed by cell index. `status` is one string for all cells, an array (one
 *   entry for all cells, or one per cell) or a sparse object; it becomes the attribute "status".
 * - `category.index` is an array of ids or an object id -> position; when absent the dimension has
 *   a single category, the one key of `category.label`.
 * - `role.time` names the time dimension (its category ids are periods: "2012", "2019-Q1", also
 *   the compact "2019Q1"); without it the option `timeDimension` may name one; otherwise period "".
 *   `role.metric` categories' `unit` objects are reported as meta.datasets[i].units.
 * - Values: number -> value, null -> explicitly missing (null). Text cells (JSON-stat allows them,
 *   see the order.json sample) are JSONSTAT_VALUE_NOT_NUMERIC: this tool stores numbers only.
 * - Collections: embedded datasets (items carrying `id`/`dimension`) are read in turn, each
 *   observation tagged with the item's href (or label) in `dataset`; items that are only links are
 *   listed in meta.links for the caller to fetch.
 * Locations are JSON paths, e.g. `$.value[5]`, `$.link.item[0].dimension.area.category.index`.
 */
import { z } from "zod";
import {
  baseOptionsShape,
  describeValueProblem,
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

const SOURCE = "jsonstat";

export const jsonStatOptionsSchema = z.strictObject({
  ...baseOptionsShape,
  /** Time dimension id when the dataset has no role.time. */
  timeDimension: z.string().min(1).optional(),
});
export type JsonStatOptions = z.input<typeof jsonStatOptionsSchema>;
type Options = z.output<typeof jsonStatOptionsSchema>;

type Json = unknown;
type JsonObject = Record<string, Json>;

function isObject(v: Json): v is JsonObject {
  return typeof v === "object" && v !== null && !Array.isArray(v);
}

interface DimensionInfo {
  id: string;
  /** Category ids in position order. */
  categories: string[];
}

/**
 * Coordinates (category positions) of cell `index` in a JSON-stat value array with dimension
 * sizes `size`: row-major, the last dimension varying fastest.
 * Example: cellCoordinates(5, [3, 2, 4]) -> [0, 1, 1]
 */
export function cellCoordinates(index: number, size: readonly number[]): number[] {
  const out = new Array<number>(size.length);
  let rest = index;
  for (let d = size.length - 1; d >= 0; d--) {
    out[d] = rest % size[d]!;
    rest = Math.floor(rest / size[d]!);
  }
  return out;
}

class JsonStatReader {
  private readonly state: ParseState;
  private readonly opts: Options;
  private readonly sink: ObservationSink;
  private readonly periods = new PeriodCache({ lenient: true });

  constructor(state: ParseState, opts: Options, sink: ObservationSink) {
    this.state = state;
    this.opts = opts;
    this.sink = sink;
  }

  read(root: Json): void {
    const state = this.state;
    if (!isObject(root)) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: "$" }, "a JSON-stat response is an object");
      return;
    }
    const cls = root.class;
    if (typeof root.version === "string") state.meta.version = root.version;
    if (cls === "dataset" || (cls === undefined && (root.dimension !== undefined || Array.isArray(root.id)) && root.version !== undefined)) {
      if (typeof root.updated === "string") state.meta.prepared = root.updated;
      this.dataset(root, []);
    } else if (cls === "collection") {
      if (typeof root.updated === "string") state.meta.prepared = root.updated;
      this.collection(root, []);
    } else if (cls === undefined && root.version === undefined) {
      state.report(
        "JSONSTAT_UNSUPPORTED",
        { path: "$" },
        "no 'class' and no 'version': this looks like a JSON-stat 1.0 bundle, which this reader does not read (JSON-stat 2.0 only)",
      );
    } else {
      state.report("JSONSTAT_UNSUPPORTED", { path: "$.class", field: "class" }, `class ${quoteValue(cls)} is not read (dataset and collection are)`, cls);
    }
  }

  private collection(root: JsonObject, path: (string | number)[]): void {
    const items = isObject(root.link) && Array.isArray(root.link.item) ? root.link.item : null;
    if (!items) {
      this.state.report("JSON_UNEXPECTED_SHAPE", { path: jsonPath([...path, "link", "item"]) }, "a collection lists its items in link.item");
      return;
    }
    items.forEach((item, i) => {
      const ipath = [...path, "link", "item", i];
      if (!isObject(item)) return;
      const embedded = item.dimension !== undefined || Array.isArray(item.id);
      if (embedded && (item.class === "dataset" || item.class === undefined)) {
        this.dataset(item, ipath);
      } else if (item.class === "collection" && isObject(item.link)) {
        this.collection(item, ipath);
      } else if (typeof item.href === "string") {
        const link: { href: string; label?: string; class?: string } = { href: item.href };
        if (typeof item.label === "string") link.label = item.label;
        if (typeof item.class === "string") link.class = item.class;
        this.state.meta.links.push(link);
      }
    });
    if (this.state.meta.links.length) {
      this.state.note(`the collection links ${this.state.meta.links.length} item(s) without embedding them: fetch meta.links to read them`);
    }
  }

  private dataset(ds: JsonObject, path: (string | number)[]): void {
    const state = this.state;
    const meta: DatasetMeta = {};
    if (typeof ds.href === "string") meta.id = ds.href;
    if (typeof ds.label === "string") meta.label = ds.label;
    if (typeof ds.updated === "string") meta.updated = ds.updated;
    state.meta.datasets.push(meta);
    const datasetId = meta.id ?? meta.label;
    const p = (...rest: (string | number)[]) => jsonPath([...path, ...rest]);

    // id and size
    const ids = ds.id;
    const size = ds.size;
    if (!Array.isArray(ids) || !ids.every((x) => typeof x === "string")) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: p("id") }, "'id' must be an array of dimension ids");
      return;
    }
    if (!Array.isArray(size) || !size.every((x) => typeof x === "number" && Number.isInteger(x) && x >= 0)) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: p("size") }, "'size' must be an array of category counts");
      return;
    }
    if (ids.length !== size.length) {
      state.report("JSONSTAT_SIZE_MISMATCH", { path: p("size") }, `'id' has ${ids.length} dimensions but 'size' has ${size.length} entries`, size);
      return;
    }
    const dimObj = isObject(ds.dimension) ? ds.dimension : null;
    if (!dimObj) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: p("dimension") }, "the dataset has no 'dimension' object");
      return;
    }
    // dimensions
    const dims: DimensionInfo[] = [];
    for (let d = 0; d < ids.length; d++) {
      const id = ids[d] as string;
      const info = this.dimension(dimObj[id], id, size[d] as number, [...path, "dimension", id]);
      if (!info) return;
      dims.push(info);
    }
    // roles
    const role = isObject(ds.role) ? ds.role : {};
    const timeRole = Array.isArray(role.time) && typeof role.time[0] === "string" ? (role.time[0] as string) : undefined;
    const timeId = timeRole ?? this.opts.timeDimension;
    let timeIndex = -1;
    if (timeId !== undefined) {
      timeIndex = ids.indexOf(timeId);
      if (timeIndex < 0) state.report("JSON_UNEXPECTED_SHAPE", { path: p("role", "time"), field: timeId }, `time dimension '${timeId}' is not in 'id'`, timeId);
    }
    meta.timeDimension = timeIndex >= 0 ? timeId! : null;
    if (timeIndex < 0) state.note("a dataset has no time dimension (no role.time): its observations have period \"\"");
    if (Array.isArray(role.metric)) {
      const units: Record<string, Record<string, string | number>> = {};
      for (const m of role.metric) {
        if (typeof m !== "string" || !isObject(dimObj[m])) continue;
        const cat = (dimObj[m] as JsonObject).category;
        if (!isObject(cat) || !isObject(cat.unit)) continue;
        for (const [cid, u] of Object.entries(cat.unit)) {
          if (!isObject(u)) continue;
          const clean: Record<string, string | number> = {};
          for (const [k, v] of Object.entries(u)) if (typeof v === "string" || typeof v === "number") clean[k] = v;
          units[cid] = clean;
        }
      }
      if (Object.keys(units).length) meta.units = units;
    }
    // periods of the time dimension
    const periodOf: (string | null)[] = [];
    if (timeIndex >= 0) {
      dims[timeIndex]!.categories.forEach((c, ci) => {
        const parsed = this.periods.get(c);
        if (isParsedPeriod(parsed)) periodOf[ci] = parsed.canonical;
        else {
          periodOf[ci] = null;
          state.report(parsed.problem, { path: p("dimension", timeId!, "category", "index", ci), field: timeId! }, parsed.reason, c);
        }
      });
    }
    // value and status
    let total = 1;
    for (const s of size as number[]) total *= s;
    const value = ds.value;
    const status = ds.status;
    let dense: Json[] | null = null;
    let sparse: JsonObject | null = null;
    if (Array.isArray(value)) {
      if (value.length !== total) {
        state.report(
          "JSONSTAT_SIZE_MISMATCH",
          { path: p("value") },
          `'value' has ${value.length} cells but the sizes [${(size as number[]).join(", ")}] multiply to ${total}`,
          value.length,
        );
        return;
      }
      dense = value;
    } else if (isObject(value)) {
      sparse = value;
    } else {
      state.report("JSON_UNEXPECTED_SHAPE", { path: p("value") }, "'value' must be an array or an object");
      return;
    }
    const statusAll = typeof status === "string" ? status : Array.isArray(status) && status.length === 1 && typeof status[0] === "string" ? status[0] : null;
    const statusArr = Array.isArray(status) && status.length !== 1 ? status : null;
    if (statusArr && statusArr.length !== total) {
      state.report("JSONSTAT_SIZE_MISMATCH", { path: p("status") }, `'status' has ${statusArr.length} entries, expected 1 or ${total}`, statusArr.length);
    }
    const statusObj = isObject(status) ? status : null;
    if (statusObj) {
      for (const k of Object.keys(statusObj)) {
        const n = Number(k);
        if (!Number.isInteger(n) || n < 0 || n >= total) {
          state.report("JSONSTAT_INDEX_OUT_OF_RANGE", { path: p("status", k) }, `status key '${k}' is not a cell index below ${total}`, k);
        }
      }
    }
    const attrCache = new Map<string, Readonly<Record<string, string>>>();
    const noAttrs: Readonly<Record<string, string>> = Object.freeze({});
    const attributesFor = (cell: number): Readonly<Record<string, string>> => {
      let s: Json = statusAll;
      if (statusArr) s = statusArr[cell];
      else if (statusObj) s = statusObj[String(cell)];
      if (typeof s !== "string" || s === "") return noAttrs;
      let a = attrCache.get(s);
      if (!a) attrCache.set(s, (a = Object.freeze({ status: s })));
      return a;
    };
    // cells
    const dimCache = new Map<string, Readonly<Record<string, string>>>();
    const n = dims.length;
    const coords = new Array<number>(n).fill(0);
    const emit = (cell: number, raw: Json): void => {
      // coordinates of `cell` (row-major, last dimension fastest)
      let rest = cell;
      for (let d = n - 1; d >= 0; d--) {
        const s = size[d] as number;
        coords[d] = rest % s;
        rest = Math.floor(rest / s);
      }
      let key = "";
      for (let d = 0; d < n; d++) if (d !== timeIndex) key += `${coords[d]}:`;
      let dimensions = dimCache.get(key);
      if (!dimensions) {
        const out: Record<string, string> = {};
        for (let d = 0; d < n; d++) if (d !== timeIndex) out[dims[d]!.id] = dims[d]!.categories[coords[d]!]!;
        dimensions = out;
        dimCache.set(key, dimensions);
      }
      let period = "";
      if (timeIndex >= 0) {
        const pt = periodOf[coords[timeIndex]!];
        if (pt === null || pt === undefined) {
          state.skip("issue");
          return;
        }
        period = pt;
      }
      const where = (): string => (dense ? p("value", cell) : p("value", String(cell)));
      let v: number | null;
      if (raw === null) v = null;
      else if (typeof raw === "number") {
        const problem = valueProblem(raw, this.opts.nonNegative);
        if (problem) {
          state.report(problem, { path: where() }, describeValueProblem(problem, raw), raw);
          state.skip("issue");
          return;
        }
        v = raw;
      } else {
        state.report("JSONSTAT_VALUE_NOT_NUMERIC", { path: where() }, `${quoteValue(raw)} is not a number`, raw);
        state.skip("issue");
        return;
      }
      const attributes = attributesFor(cell);
      let o: ParsedObservation;
      if (this.opts.locations) {
        o = datasetId !== undefined ? { dimensions, period, value: v, attributes, dataset: datasetId, location: { path: where() } } : { dimensions, period, value: v, attributes, location: { path: where() } };
      } else {
        o = datasetId !== undefined ? { dimensions, period, value: v, attributes, dataset: datasetId } : { dimensions, period, value: v, attributes };
      }
      state.counts.observations++;
      this.sink(o);
    };
    if (dense) {
      for (let i = 0; i < dense.length; i++) emit(i, dense[i]);
    } else if (sparse) {
      const keys = Object.keys(sparse)
        .map((k) => [k, Number(k)] as const)
        .sort((a, b) => a[1] - b[1]);
      for (const [k, cell] of keys) {
        if (!Number.isInteger(cell) || cell < 0 || cell >= total || String(cell) !== k) {
          state.report("JSONSTAT_INDEX_OUT_OF_RANGE", { path: p("value", k) }, `value key '${k}' is not a cell index below ${total}`, k);
          state.skip("issue");
          continue;
        }
        emit(cell, sparse[k]);
      }
    }
  }

  /** Category ids of one dimension in position order, checked against its size. */
  private dimension(raw: Json, id: string, size: number, path: (string | number)[]): DimensionInfo | null {
    const state = this.state;
    if (!isObject(raw)) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: jsonPath(path), field: id }, `dimension '${id}' listed in 'id' is not described in 'dimension'`, id);
      return null;
    }
    const cat = isObject(raw.category) ? raw.category : null;
    if (!cat) {
      state.report("JSON_UNEXPECTED_SHAPE", { path: jsonPath([...path, "category"]), field: id }, `dimension '${id}' has no 'category'`);
      return null;
    }
    let categories: string[];
    const index = cat.index;
    if (Array.isArray(index)) {
      if (!index.every((x) => typeof x === "string")) {
        state.report("JSON_UNEXPECTED_SHAPE", { path: jsonPath([...path, "category", "index"]), field: id }, "category.index must list category ids");
        return null;
      }
      categories = index as string[];
    } else if (isObject(index)) {
      const entries = Object.entries(index);
      categories = new Array<string>(entries.length);
      for (const [cid, pos] of entries) {
        if (typeof pos !== "number" || !Number.isInteger(pos) || pos < 0 || pos >= entries.length || categories[pos] !== undefined) {
          state.report(
            "JSONSTAT_INDEX_OUT_OF_RANGE",
            { path: jsonPath([...path, "category", "index", cid]), field: id },
            `category '${cid}' has position ${quoteValue(pos)}: positions must be 0..${entries.length - 1}, each once`,
            pos,
          );
          return null;
        }
        categories[pos] = cid;
      }
    } else if (index === undefined && isObject(cat.label) && Object.keys(cat.label).length === 1) {
      categories = Object.keys(cat.label);
    } else {
      state.report(
        "JSON_UNEXPECTED_SHAPE",
        { path: jsonPath([...path, "category"]), field: id },
        `dimension '${id}' has no category.index (allowed only with a single category in category.label)`,
      );
      return null;
    }
    if (new Set(categories).size !== categories.length) {
      state.report("JSONSTAT_SIZE_MISMATCH", { path: jsonPath([...path, "category", "index"]), field: id }, `dimension '${id}' lists a category id twice`);
      return null;
    }
    if (categories.length !== size) {
      state.report(
        "JSONSTAT_SIZE_MISMATCH",
        { path: jsonPath([...path, "category", "index"]), field: id },
        `dimension '${id}' has ${categories.length} categories but 'size' says ${size}`,
        categories.length,
      );
      return null;
    }
    return { id, categories };
  }
}

/**
 * Parse a JSON-stat 2.0 dataset or collection, handing each observation to `onObservation`.
 * The document is read whole (JSON-stat responses are one object whose parts refer to each other).
 *
 * Example: parseJsonStatStream(text, { mode: "collect" }, (o) => rows.push(o))
 *
 * Reference: JSON-stat format version 2.0 (json-stat.org/format).
 */
export async function parseJsonStatStream(input: PayloadInput, options: JsonStatOptions | undefined, onObservation: ObservationSink, control: StreamControl = {}): Promise<ParseSummary> {
  const opts = validateOptions(jsonStatOptionsSchema, options, SOURCE);
  const state = new ParseState("jsonstat", SOURCE, opts);
  state.afterChunk = control.afterChunk;
  const doc = await readJsonDocument(input, state);
  if (doc.ok) new JsonStatReader(state, opts, onObservation).read(doc.value);
  return state.summary();
}

/** Parse a JSON-stat 2.0 dataset or collection and return the observations with the summary. */
export async function parseJsonStat(input: PayloadInput, options?: JsonStatOptions): Promise<ParseResult> {
  const observations: ParsedObservation[] = [];
  const summary = await parseJsonStatStream(input, options, (o) => observations.push(o));
  return { observations, ...summary };
}
