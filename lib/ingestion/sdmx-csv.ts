/**
 * SDMX-CSV data messages (1.0 and 2.x) to observations, read as a stream.
 *
 * Reading rules (SDMX-CSV field guide, sdmx-twg/sdmx-csv, data message):
 * - Header: the first column is DATAFLOW (1.0) or STRUCTURE, optionally STRUCTURE[x] declaring the
 *   sub-field separator x (2.x). The field separator is "the character that follows the fixed
 *   first column header term", so it is detected from the header line (`,` `;` tab `|`).
 * - Special 2.x columns: STRUCTURE, STRUCTURE_ID, STRUCTURE_NAME (labels=name), ACTION, SERIES_KEY,
 *   OBS_KEY; 1.0: DATAFLOW and SERIESKEY. Custom columns UPDATED / PREPARED go to meta.
 * - Labels: "ID: Name" headers (labels=both) are read as ID, and "ID: Name" cells of dimensions,
 *   the time column, coded attributes and STRUCTURE_ID are read as ID. With STRUCTURE_NAME present
 *   (labels=name) every component column is followed by a name column, which is ignored.
 * - A file names no data structure, so the caller says which column is the time dimension
 *   (`timeColumn`, default TIME_PERIOD; null for data without time) and which is the measure
 *   (`valueColumn`, default OBS_VALUE). `dimensions` / `attributes` list the other columns' roles;
 *   without them, SDMX cross-domain attribute concepts (OBS_STATUS, UNIT_MULT, ...), any OBS_*
 *   column and multi-valued/multi-lingual columns ("X[]", "X[en;fr]") are attributes, further
 *   OBS_VALUE* columns are other measures (ignored), the rest are dimensions.
 * - Values: empty measure cell -> no observation in that row (an attribute-only row, skipped);
 *   "NaN" -> explicitly missing (null), SDMX's missing-value marker; other text ->
 *   CSV_NON_NUMERIC_VALUE. A decimal comma is read only when the separator is ";" (field guide
 *   example 4: "transforming also the field separator ... and the decimal separator") or when the
 *   option `decimal: ","` says so.
 * - ACTION letters I/A/M/R/D -> Information/Append/Merge/Replace/Delete; absent -> Information.
 *   Delete rows are never observations: they become meta.deletions (wildcarded dimensions are
 *   the empty ones; measures/attributes with a non-empty cell, e.g. "-", are the components).
 * - Several structures in one file (STRUCTURE_ID varies): each observation carries its
 *   structure id in `dataset`; a dimension column empty in a row belongs to another structure.
 *   The dimensions of a structure are learnt from its first observation row; a later observation
 *   row of that structure with one of them empty is SDMX_MISSING_DIMENSION.
 * - A record with one field more than the header whose last field is empty (a trailing separator,
 *   as in the field guide's example 18) is read without that field.
 * Locations: line (1-based, where the record starts) and column (1-based field position).
 */
import { z } from "zod";
import {
  baseOptionsShape,
  DuplicateIndex,
  ParseState,
  readCsv,
  readDecimal,
  validateOptions,
  describeValueProblem,
  type DatasetMeta,
  type ObservationSink,
  type ParsedObservation,
  type ParseResult,
  type ParseSummary,
  type PayloadInput,
  type StreamControl,
} from "./common";
import { quoteValue } from "./errors";
import { isParsedPeriod, PeriodCache } from "./period";
import type { SourceLocation } from "./types";

const SOURCE = "sdmx-csv";

export const sdmxCsvOptionsSchema = z.strictObject({
  ...baseOptionsShape,
  /** Field separator; default: detected from the header (the character after STRUCTURE / DATAFLOW). */
  separator: z.enum([",", ";", "\t", "|"]).optional(),
  /** Decimal mark of the measure column; default "," when the separator is ";", else ".". */
  decimal: z.enum([".", ","]).optional(),
  /** Column of the time dimension (default TIME_PERIOD); null: the data have no time dimension. */
  timeColumn: z.string().min(1).nullable().default("TIME_PERIOD"),
  /** Column of the measure to read (default OBS_VALUE). */
  valueColumn: z.string().min(1).default("OBS_VALUE"),
  /** Dimension columns (ids); the other component columns are attributes. */
  dimensions: z.array(z.string().min(1)).optional(),
  /** Attribute columns (ids); with `dimensions` absent, the other component columns are dimensions. */
  attributes: z.array(z.string().min(1)).optional(),
  /** Columns to leave out entirely (other measures, custom columns). */
  ignore: z.array(z.string().min(1)).default([]),
  /** "auto" detects labels=both ("ID: Name" headers) and labels=name (STRUCTURE_NAME column). */
  labels: z.enum(["auto", "id", "both", "name"]).default("auto"),
});
export type SdmxCsvOptions = z.input<typeof sdmxCsvOptionsSchema>;
type Options = z.output<typeof sdmxCsvOptionsSchema>;

/** SDMX cross-domain concepts used as attributes (SDMX Content-Oriented Guidelines, Annex 1). */
const KNOWN_ATTRIBUTES = new Set([
  "OBS_STATUS",
  "OBS_CONF",
  "OBS_PRE_BREAK",
  "OBS_COM",
  "CONF_STATUS",
  "UNIT_MULT",
  "UNIT_MEASURE",
  "DECIMALS",
  "TITLE",
  "TITLE_COMPL",
  "COMMENT_OBS",
  "COMMENT_TS",
  "COMMENT_DSET",
  "TIME_FORMAT",
  "TIME_PER_COLLECT",
  "EMBARGO_TIME",
  "BASE_PER",
  "COMPILATION",
  "SOURCE_AGENCY",
  "DATA_COMP",
  "REF_PERIOD_DETAIL",
  "NAT_TITLE",
  "COVERAGE",
  "BREAKS",
]);

const ACTION_LETTERS: Record<string, string> = { I: "Information", A: "Append", M: "Merge", R: "Replace", D: "Delete" };
const NAN_ONLY: ReadonlySet<string> = new Set(["NaN"]);

type Role = "structure" | "structureId" | "structureName" | "action" | "key" | "time" | "value" | "dimension" | "attribute" | "ignore" | "updated" | "prepared" | "name";

interface Column {
  index: number;
  /** Header id (labels and brackets removed). */
  id: string;
  role: Role;
  /** Multi-valued ("X[]") or multi-lingual ("X[en;fr]") column: raw text kept, no label stripping. */
  multi: boolean;
}

/** Strip a "ID: Name" label; a value without ": " is returned as is. */
function stripLabel(text: string): string {
  const i = text.indexOf(": ");
  return i >= 0 ? text.slice(0, i) : text;
}

/** The series of the previous observation row: its key cells, shared dimensions, seen periods. */
interface SeriesSlot {
  structure: StructureInfo;
  cells: string[];
  dims: Readonly<Record<string, string>>;
  periods: Map<string, number> | null;
}

interface StructureInfo {
  id: string;
  meta: DatasetMeta;
  /** Dimension column indexes seen non-empty in this structure's first observation row. */
  dims: number[] | null;
}

class SdmxCsvReader {
  private readonly state: ParseState;
  private readonly opts: Options;
  private readonly sink: ObservationSink;
  private columns: Column[] = [];
  private dimCols: Column[] = [];
  private attrCols: Column[] = [];
  private timeCol: Column | null = null;
  private valueCol: Column | null = null;
  private structureCol: Column | null = null;
  private structureIdCol: Column | null = null;
  private actionCol: Column | null = null;
  private updatedCol: Column | null = null;
  private preparedCol: Column | null = null;
  private width = 0;
  private labelsBoth = false;
  private decimalComma = false;
  private readonly periods = new PeriodCache();
  private readonly duplicates = new DuplicateIndex();
  private readonly structures = new Map<string, StructureInfo>();
  private readonly dimsCache = new Map<string, Readonly<Record<string, string>>>();
  private readonly attrsCache = new Map<string, Readonly<Record<string, string>>>();
  private lastSeries: SeriesSlot | null = null;
  private lastAttrCells: string[] | null = null;
  private lastAttrs: Readonly<Record<string, string>> = {};
  private lastStructure: StructureInfo | null = null;
  private static readonly EMPTY: Readonly<Record<string, string>> = Object.freeze({});
  separator = ",";

  constructor(state: ParseState, opts: Options, sink: ObservationSink) {
    this.state = state;
    this.opts = opts;
    this.sink = sink;
  }

  delimiter(headerLine: string, loc: SourceLocation): string | null {
    const m = /^"?(STRUCTURE(?:\[[^\]]*\])?|DATAFLOW)"?([,;\t|])/.exec(headerLine);
    if (this.opts.separator) {
      this.separator = this.opts.separator;
    } else if (m) {
      this.separator = m[2]!;
    } else {
      this.state.collector.fatal(
        this.state.error(
          "CSV_HEADER_INVALID",
          { ...loc, field: headerLine.slice(0, 20) },
          "not SDMX-CSV: the first header cell must be STRUCTURE (2.x), STRUCTURE[x] or DATAFLOW (1.0), followed by the field separator",
          headerLine.slice(0, 40),
        ),
      );
      return null;
    }
    this.state.meta.version = m?.[1] === "DATAFLOW" ? "1.0" : "2.x";
    this.decimalComma = (this.opts.decimal ?? (this.separator === ";" ? "," : ".")) === ",";
    return this.separator;
  }

  onHeader(fields: string[], line: number): boolean {
    const opts = this.opts;
    const labelsName = opts.labels === "name" || (opts.labels === "auto" && fields.some((f) => f.trim() === "STRUCTURE_NAME"));
    this.labelsBoth = opts.labels === "both" || (opts.labels === "auto" && fields.slice(1).some((f) => f.includes(": ")));
    const dimSet = opts.dimensions ? new Set(opts.dimensions) : null;
    const attrSet = opts.attributes ? new Set(opts.attributes) : null;
    const ignore = new Set(opts.ignore);
    const seen = new Map<string, number>();
    let pairNext = false;
    let pastSpecial = false;
    this.width = fields.length;
    for (let i = 0; i < fields.length; i++) {
      const raw = fields[i]!.trim();
      if (labelsName && pairNext) {
        // labels=name: the column after a component column holds its localised name.
        this.columns.push({ index: i, id: raw, role: "name", multi: false });
        pairNext = false;
        continue;
      }
      let text = this.labelsBoth ? stripLabel(raw) : raw;
      const bracket = /^([^[\]]+)\[([^\]]*)\]$/.exec(text);
      let multi = false;
      if (bracket) {
        text = bracket[1]!;
        multi = i > 0; // STRUCTURE[;] declares the sub-field separator, it is not multi-valued
      } else if (/\[\]\./.test(text)) {
        multi = true; // nested metadata attribute, e.g. CONTACT[].NAME[]
        text = text.replace(/\[[^\]]*\]/g, "");
      }
      const id = text;
      if (seen.has(id)) {
        this.state.collector.fatal(
          this.state.error("CSV_DUPLICATE_COLUMN", { line, column: i + 1, field: id }, `column '${id}' appears twice in the header (columns ${seen.get(id)! + 1} and ${i + 1})`, id),
        );
        return false;
      }
      seen.set(id, i);
      let role: Role;
      if (i === 0 && (id === "STRUCTURE" || id === "DATAFLOW")) role = id === "STRUCTURE" ? "structure" : "structureId";
      else if (!pastSpecial && id === "STRUCTURE_ID") role = "structureId";
      else if (!pastSpecial && id === "STRUCTURE_NAME") role = "structureName";
      else if (!pastSpecial && id === "ACTION") role = "action";
      else if (id === "SERIES_KEY" || id === "OBS_KEY" || id === "SERIESKEY") role = "key";
      else if (ignore.has(id)) role = "ignore";
      else if (opts.timeColumn !== null && id === opts.timeColumn) role = "time";
      else if (id === opts.valueColumn) role = "value";
      else if (/^updated$/i.test(id)) role = "updated";
      else if (/^prepared$/i.test(id)) role = "prepared";
      else if (id.startsWith("OBS_VALUE") && !dimSet?.has(id) && !attrSet?.has(id)) role = "ignore"; // another measure
      else if (dimSet && attrSet) role = dimSet.has(id) ? "dimension" : attrSet.has(id) ? "attribute" : "ignore";
      else if (dimSet) role = dimSet.has(id) ? "dimension" : "attribute";
      else if (attrSet) role = attrSet.has(id) ? "attribute" : "dimension";
      else if (multi || KNOWN_ATTRIBUTES.has(id) || (id.startsWith("OBS_") && !id.startsWith("OBS_VALUE"))) role = "attribute";
      else role = "dimension";
      if (role !== "structure" && role !== "structureId" && role !== "structureName" && role !== "action") pastSpecial = true;
      const col: Column = { index: i, id, role, multi };
      this.columns.push(col);
      if (labelsName && i > 0 && role !== "structureName" && role !== "action" && role !== "key" && role !== "updated" && role !== "prepared") pairNext = role !== "structureId";
      switch (role) {
        case "time":
          this.timeCol = col;
          break;
        case "value":
          this.valueCol = col;
          break;
        case "dimension":
          this.dimCols.push(col);
          break;
        case "attribute":
          this.attrCols.push(col);
          break;
        case "structure":
          this.structureCol = col;
          break;
        case "structureId":
          this.structureIdCol = col;
          break;
        case "action":
          this.actionCol = col;
          break;
        case "updated":
          this.updatedCol = col;
          break;
        case "prepared":
          this.preparedCol = col;
          break;
        default:
          break;
      }
    }
    if (dimSet) {
      for (const d of dimSet) {
        if (!seen.has(d)) {
          this.state.collector.fatal(this.state.error("CSV_MISSING_COLUMN", { line, field: d }, `dimension column '${d}' is not in the header`, d));
          return false;
        }
      }
    }
    if (!this.valueCol) {
      this.state.note(`no '${opts.valueColumn}' column: the rows carry no observation values (attribute or deletion rows only)`);
    } else if (opts.timeColumn !== null && !this.timeCol) {
      this.state.collector.fatal(
        this.state.error(
          "CSV_MISSING_COLUMN",
          { line, field: opts.timeColumn },
          `time column '${opts.timeColumn}' is not in the header; name it with the option timeColumn (or null for data without time)`,
          opts.timeColumn,
        ),
      );
      return false;
    }
    if (!this.structureIdCol) {
      this.state.note("no STRUCTURE_ID / DATAFLOW column: observations carry no structure id");
    }
    return true;
  }

  private structureOf(id: string): StructureInfo {
    let s = this.structures.get(id);
    if (!s) {
      const meta: DatasetMeta = { id, timeDimension: this.opts.timeColumn };
      this.state.meta.datasets.push(meta);
      s = { id, meta, dims: null };
      this.structures.set(id, s);
    }
    return s;
  }

  onRecord(fields: string[], line: number): boolean {
    const state = this.state;
    if (fields.length === this.width + 1 && fields[this.width] === "") {
      // A trailing separator after the last field (official SDMX-CSV example 18 has one).
      fields.pop();
    }
    if (fields.length !== this.width) {
      const column = Math.min(fields.length, this.width) + 1;
      state.report(
        "CSV_COLUMN_COUNT_MISMATCH",
        { line, column },
        `the record has ${fields.length} field(s), the header has ${this.width}`,
        fields.length,
      );
      state.skip("issue");
      return true;
    }
    // Structure and action.
    let structureId = "";
    if (this.structureIdCol) {
      const raw = fields[this.structureIdCol.index]!;
      structureId = this.labelsBoth ? stripLabel(raw) : raw;
    }
    const structure = this.lastStructure !== null && this.lastStructure.id === structureId ? this.lastStructure : (this.lastStructure = this.structureOf(structureId));
    let action = "Information";
    if (this.actionCol) {
      const a = fields[this.actionCol.index]!.trim();
      const full = ACTION_LETTERS[a];
      if (full) action = full;
      else if (a !== "") {
        state.report("SDMX_UNKNOWN_ACTION", { line, column: this.actionCol.index + 1, field: "ACTION" }, `action ${quoteValue(a)} is not one of I, A, M, R, D; read as Information`, a);
      }
    }
    if (!structure.meta.action) structure.meta.action = action;
    else if (structure.meta.action !== action && !structure.meta.action.includes(action)) structure.meta.action = `${structure.meta.action}, ${action}`;
    if (this.updatedCol && structure.meta.updated === undefined) {
      const u = fields[this.updatedCol.index]!;
      if (u) structure.meta.updated = u;
    }
    if (this.preparedCol && state.meta.prepared === undefined) {
      const p = fields[this.preparedCol.index]!;
      if (p) state.meta.prepared = p;
    }
    if (action === "Delete") {
      this.deletion(fields, line, structureId);
      return true;
    }
    const valueCol = this.valueCol;
    if (!valueCol) {
      state.skip("no measure column");
      return true;
    }
    const valueText = fields[valueCol.index]!;
    if (valueText === "") {
      state.skip("attribute-only row");
      return true;
    }
    // Period.
    let period = "";
    const timeCol = this.timeCol;
    if (timeCol) {
      let t = fields[timeCol.index]!;
      if (this.labelsBoth) t = stripLabel(t);
      if (t === "") {
        state.report("PERIOD_MISSING", { line, column: timeCol.index + 1, field: timeCol.id }, "the row has a value but no period", t);
        state.skip("issue");
        return true;
      }
      const p = this.periods.get(t);
      if (!isParsedPeriod(p)) {
        state.report(p.problem, { line, column: timeCol.index + 1, field: timeCol.id }, p.reason, t);
        state.skip("issue");
        return true;
      }
      period = p.canonical;
    }
    // Value.
    const v = readDecimal(valueText, NAN_ONLY, this.decimalComma);
    if (typeof v === "string") {
      const loc = { line, column: valueCol.index + 1, field: valueCol.id };
      if (v === "NOT_FINITE") state.report("VALUE_NOT_FINITE", loc, describeValueProblem("VALUE_NOT_FINITE", valueText), valueText);
      else state.report("CSV_NON_NUMERIC_VALUE", loc, `${quoteValue(valueText)} is not a number`, valueText);
      state.skip("issue");
      return true;
    }
    const value = v;
    if (value !== null && this.opts.nonNegative && value < 0) {
      state.report("VALUE_NEGATIVE", { line, column: valueCol.index + 1, field: valueCol.id }, describeValueProblem("VALUE_NEGATIVE", valueText), valueText);
      state.skip("issue");
      return true;
    }
    // Dimensions: one shared object per series. Rows of a series usually follow each other, so
    // the previous row's key cells are compared first.
    let present = structure.dims;
    if (present === null) {
      present = [];
      for (const c of this.dimCols) if (fields[c.index] !== "") present.push(c.index);
      structure.dims = present;
    }
    const last = this.lastSeries;
    let same = last !== null && last.structure === structure;
    for (let i = 0; i < present.length; i++) {
      const cell = fields[present[i]!]!;
      if (cell === "") {
        const idx = present[i]!;
        const c = this.columns[idx]!;
        state.report("SDMX_MISSING_DIMENSION", { line, column: idx + 1, field: c.id }, `dimension ${c.id} is empty in an observation row`);
        state.skip("issue");
        return true;
      }
      if (same && last!.cells[i] !== cell) same = false;
    }
    let series: SeriesSlot;
    if (same) series = last!;
    else {
      let key = structureId;
      const cells: string[] = new Array(present.length);
      for (let i = 0; i < present.length; i++) {
        const cell = fields[present[i]!]!;
        cells[i] = cell;
        key += "\u0001" + cell;
      }
      let dims = this.dimsCache.get(key);
      if (dims === undefined) {
        const d: Record<string, string> = {};
        for (let i = 0; i < present.length; i++) {
          const idx = present[i]!;
          d[this.columns[idx]!.id] = this.labelsBoth ? stripLabel(fields[idx]!) : fields[idx]!;
        }
        dims = d;
        if (this.dimsCache.size >= 200_000) this.dimsCache.clear();
        this.dimsCache.set(key, dims);
      }
      series = { structure, cells, dims, periods: this.opts.checkDuplicates ? this.duplicates.periodsOf(key) : null };
      this.lastSeries = series;
    }
    const dims = series.dims;
    // Duplicates.
    const periods = series.periods;
    if (periods !== null) {
      const first = periods.get(period);
      if (first !== undefined) {
        const c = timeCol ?? valueCol;
        state.report(
          "DUPLICATE_OBSERVATION",
          { line, column: c.index + 1, field: c.id },
          `the same dimensions and period (${period || "no period"}) were already on line ${first}`,
          period,
        );
        state.skip("issue");
        return true;
      }
      periods.set(period, line);
    }
    // Attributes: shared object for identical attribute cells.
    const attributes = this.attributes(fields);
    const o: ParsedObservation = this.opts.locations
      ? structureId
        ? { dimensions: dims, period, value, attributes, dataset: structureId, location: this.location(line) }
        : { dimensions: dims, period, value, attributes, location: this.location(line) }
      : structureId
        ? { dimensions: dims, period, value, attributes, dataset: structureId }
        : { dimensions: dims, period, value, attributes };
    state.counts.observations++;
    this.sink(o);
    return true;
  }

  private location(line: number): SourceLocation {
    return this.state.file ? { file: this.state.file, line } : { line };
  }

  private attributes(fields: string[]): Readonly<Record<string, string>> {
    const cols = this.attrCols;
    if (cols.length === 0) return SdmxCsvReader.EMPTY;
    const last = this.lastAttrCells;
    if (last !== null) {
      let same = true;
      for (let i = 0; i < cols.length; i++) {
        if (fields[cols[i]!.index] !== last[i]) {
          same = false;
          break;
        }
      }
      if (same) return this.lastAttrs;
    }
    const cells: string[] = new Array(cols.length);
    let key = "";
    let any = false;
    for (let i = 0; i < cols.length; i++) {
      const cell = fields[cols[i]!.index]!;
      cells[i] = cell;
      if (cell !== "") any = true;
      key += cell + "\u0001";
    }
    let a: Readonly<Record<string, string>> | undefined = any ? this.attrsCache.get(key) : SdmxCsvReader.EMPTY;
    if (a === undefined) {
      const out: Record<string, string> = {};
      for (const c of cols) {
        const cell = fields[c.index]!;
        if (cell === "") continue;
        out[c.id] = this.labelsBoth && !c.multi ? stripLabel(cell) : cell;
      }
      a = out;
      if (this.attrsCache.size >= 10_000) this.attrsCache.clear();
      this.attrsCache.set(key, a);
    }
    this.lastAttrCells = cells;
    this.lastAttrs = a;
    return a;
  }

  private deletion(fields: string[], line: number, structureId: string): void {
    const dimensions: Record<string, string> = {};
    for (const c of this.dimCols) {
      const cell = fields[c.index]!;
      if (cell !== "") dimensions[c.id] = this.labelsBoth ? stripLabel(cell) : cell;
    }
    const components: string[] = [];
    if (this.valueCol && fields[this.valueCol.index] !== "") components.push(this.valueCol.id);
    for (const c of this.attrCols) if (fields[c.index] !== "") components.push(c.id);
    const d: { dataset?: string; dimensions: Record<string, string>; period?: string; components: string[]; location: SourceLocation } = {
      dimensions,
      components,
      location: this.location(line),
    };
    if (structureId) d.dataset = structureId;
    if (this.timeCol) {
      const t = fields[this.timeCol.index]!;
      if (t !== "") {
        const p = this.periods.get(this.labelsBoth ? stripLabel(t) : t);
        d.period = isParsedPeriod(p) ? p.canonical : t;
      }
    }
    this.state.meta.deletions.push(d);
    this.state.skip("deletion");
  }
}

/**
 * Parse an SDMX-CSV data message from a stream, handing each observation to `onObservation`.
 * Options are validated before the first byte is read (OPTIONS_INVALID).
 *
 * Example: parseSdmxCsvStream(createReadStream("data.csv"), { timeColumn: "TIME_PERIOD" }, (o) => store(o))
 *
 * Reference: SDMX-CSV field guide, data message (sdmx-twg/sdmx-csv), RFC 4180.
 */
export async function parseSdmxCsvStream(input: PayloadInput, options: SdmxCsvOptions | undefined, onObservation: ObservationSink, control: StreamControl = {}): Promise<ParseSummary> {
  const opts = validateOptions(sdmxCsvOptionsSchema, options, SOURCE);
  const state = new ParseState("sdmx-csv", SOURCE, opts);
  state.afterChunk = control.afterChunk;
  const reader = new SdmxCsvReader(state, opts, onObservation);
  await readCsv(input, state, {
    delimiter: (line, loc) => reader.delimiter(line, loc),
    onHeader: (fields, line) => reader.onHeader(fields, line),
    onRecord: (fields, line) => reader.onRecord(fields, line),
  });
  return state.summary();
}

/** Parse a whole SDMX-CSV message and return the observations with the summary. */
export async function parseSdmxCsv(input: PayloadInput, options?: SdmxCsvOptions): Promise<ParseResult> {
  const observations: ParsedObservation[] = [];
  const summary = await parseSdmxCsvStream(input, options, (o) => observations.push(o));
  return { observations, ...summary };
}
