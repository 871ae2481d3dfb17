/**
 * Plain CSV/TSV tables with a column mapping, long or wide layout, to observations.
 *
 * Long layout: one row per observation; the mapping names the economy, period and value columns
 * and optionally a status column (`economy=LOCATION,period=TIME,value=Value,status=Flag Codes`).
 * Wide layout: one row per series, one column per period (headers such as "1960", "2019Q1" or
 * World Bank DataBank's "1960 [YR1960]"); the mapping names the economy (and status is not used).
 *
 * Columns keep their published names: dimensions are { <economy column>: code, <extra dimension
 * columns>... }, attributes { <status column>: flag, <extra attribute columns>... }. A mapped
 * attribute column is kept even when blank (""), so the flags of a file such as the OECD legacy
 * download survive as an attribute. meta.mapping repeats which column plays which role.
 *
 * Values: text read as a decimal number ("." decimal mark, or "," with the option decimal).
 * Missing-value tokens (default "", "..", ":", "NaN", "NA", "n/a": World Bank DataBank, Eurostat
 * and common spreadsheet conventions) give null in the long layout, where the row says the
 * observation exists; in the wide layout an empty cell is no observation (skipped) and the other
 * tokens give null. Other text is CSV_NON_NUMERIC_VALUE.
 * UTF-8 with or without a byte-order mark; the separator is detected from the header line.
 */
import { z } from "zod";
import {
  baseOptionsShape,
  describeValueProblem,
  guessDelimiter,
  ParseState,
  readCsv,
  readDecimal,
  validateOptions,
  type ObservationSink,
  type ParsedObservation,
  type ParseResult,
  type ParseSummary,
  type PayloadInput,
  type StreamControl,
} from "./common";
import { IngestError, quoteValue } from "./errors";
import { isParsedPeriod, PeriodCache } from "./period";
import type { SourceLocation } from "./types";

const SOURCE = "csv";

const columnMapSchema = z.strictObject({
  economy: z.string().min(1),
  period: z.string().min(1).optional(),
  value: z.string().min(1).optional(),
  status: z.string().min(1).optional(),
});
export type ColumnMap = z.infer<typeof columnMapSchema>;

/**
 * Read a mapping written as `economy=COL,period=COL,value=COL[,status=COL]` (the command-line
 * form). Column names may contain spaces; a comma inside a name is not supported.
 * Throws OPTIONS_INVALID for an unknown role or a missing "=".
 */
export function parseColumnMap(text: string): ColumnMap {
  const out: Record<string, string> = {};
  for (const part of text.split(",")) {
    const eq = part.indexOf("=");
    if (eq < 0) throw new IngestError("OPTIONS_INVALID", SOURCE, { field: "map" }, `mapping part '${part.trim()}' has no '=' (expected role=COLUMN)`);
    const role = part.slice(0, eq).trim();
    const column = part.slice(eq + 1).trim();
    if (!["economy", "period", "value", "status"].includes(role)) {
      throw new IngestError("OPTIONS_INVALID", SOURCE, { field: "map" }, `unknown role '${role}' in the mapping (economy, period, value, status)`);
    }
    if (out[role] !== undefined) throw new IngestError("OPTIONS_INVALID", SOURCE, { field: "map" }, `role '${role}' is mapped twice`);
    out[role] = column;
  }
  const parsed = columnMapSchema.safeParse(out);
  if (!parsed.success) throw new IngestError("OPTIONS_INVALID", SOURCE, { field: "map" }, `the mapping needs at least economy=COLUMN (${parsed.error.issues[0]!.message})`);
  return parsed.data;
}

export const tabularOptionsSchema = z
  .strictObject({
    ...baseOptionsShape,
    layout: z.enum(["long", "wide"]).default("long"),
    /** Which column is which: an object or the `economy=COL,period=COL,value=COL[,status=COL]` text. */
    map: z.union([z.string().min(1), columnMapSchema]),
    /** Further key columns (e.g. INDICATOR, SUBJECT, MEASURE): part of each observation's dimensions. */
    dimensions: z.array(z.string().min(1)).default([]),
    /** Further columns kept as attributes. */
    attributes: z.array(z.string().min(1)).default([]),
    /** Wide layout: regular expression selecting the period columns (default: headers that read as periods). */
    periodColumns: z.string().min(1).optional(),
    separator: z.enum([",", ";", "\t", "|"]).optional(),
    decimal: z.enum([".", ","]).default("."),
    /** Text meaning "explicitly missing". */
    missing: z.array(z.string()).default(["", "..", ":", "NaN", "NA", "n/a"]),
    /** Lines before the header (e.g. 4 for World Bank bulk CSV downloads). */
    skipLines: z.number().int().min(0).default(0),
  })
  .superRefine((o, ctx) => {
    if (typeof o.map === "string") {
      try {
        parseColumnMap(o.map);
      } catch (e) {
        ctx.addIssue({ code: "custom", path: ["map"], message: e instanceof Error ? e.message : String(e) });
        return;
      }
    }
    const map = typeof o.map === "string" ? parseColumnMap(o.map) : o.map;
    if (o.layout === "long" && (!map.period || !map.value)) {
      ctx.addIssue({ code: "custom", path: ["map"], message: "the long layout needs period=COLUMN and value=COLUMN" });
    }
    if (o.layout === "wide" && (map.period || map.value)) {
      ctx.addIssue({ code: "custom", path: ["map"], message: "the wide layout takes periods from the header: map economy (and dimensions) only" });
    }
    if (o.periodColumns !== undefined) {
      try {
        new RegExp(o.periodColumns);
      } catch {
        ctx.addIssue({ code: "custom", path: ["periodColumns"], message: "not a valid regular expression" });
      }
    }
  });
export type TabularOptions = z.input<typeof tabularOptionsSchema>;
type Options = z.output<typeof tabularOptionsSchema>;

const DATABANK_HEADER = /^(\S+) \[YR\d{4}\]$/;

class TabularReader {
  private readonly state: ParseState;
  private readonly opts: Options;
  private readonly map: ColumnMap;
  private readonly sink: ObservationSink;
  private readonly missing: ReadonlySet<string>;
  private readonly missingWide: ReadonlySet<string>;
  private readonly periods = new PeriodCache({ lenient: true });
  private header: string[] = [];
  private economyCol = -1;
  private periodCol = -1;
  private valueCol = -1;
  private keyCols: number[] = [];
  private attrCols: number[] = [];
  /** Wide layout: [column, canonical period] pairs. */
  private periodColumns: [number, string][] = [];
  private readonly seen = new Map<string, Map<string, number>>();
  private readonly dimsCache = new Map<string, Readonly<Record<string, string>>>();

  constructor(state: ParseState, opts: Options, sink: ObservationSink) {
    this.state = state;
    this.opts = opts;
    this.map = typeof opts.map === "string" ? parseColumnMap(opts.map) : opts.map;
    this.sink = sink;
    this.missing = new Set(opts.missing);
    this.missingWide = new Set(opts.missing.filter((m) => m !== ""));
  }

  delimiter(headerLine: string): string {
    return this.opts.separator ?? guessDelimiter(headerLine);
  }

  onHeader(fields: string[], line: number): boolean {
    const state = this.state;
    this.header = fields.map((f) => f.trim());
    const index = new Map<string, number>();
    for (let i = 0; i < this.header.length; i++) {
      const h = this.header[i]!;
      if (h === "" && i === this.header.length - 1) continue; // trailing separator
      if (index.has(h)) {
        state.collector.fatal(state.error("CSV_DUPLICATE_COLUMN", { line, column: i + 1, field: h }, `column '${h}' appears twice in the header`, h));
        return false;
      }
      index.set(h, i);
    }
    const need = (name: string, role: string): number => {
      const i = index.get(name);
      if (i === undefined) {
        state.collector.fatal(
          state.error("CSV_MISSING_COLUMN", { line, field: name }, `the ${role} column '${name}' is not in the header (columns: ${this.header.filter(Boolean).join(", ")})`, name),
        );
      }
      return i ?? -1;
    };
    this.economyCol = need(this.map.economy, "economy");
    if (this.economyCol < 0) return false;
    if (this.opts.layout === "long") {
      this.periodCol = need(this.map.period!, "period");
      if (this.periodCol < 0) return false;
      this.valueCol = need(this.map.value!, "value");
      if (this.valueCol < 0) return false;
    }
    for (const d of this.opts.dimensions) {
      const i = need(d, "dimension");
      if (i < 0) return false;
      this.keyCols.push(i);
    }
    if (this.map.status) {
      const i = need(this.map.status, "status");
      if (i < 0) return false;
      this.attrCols.push(i);
    }
    for (const a of this.opts.attributes) {
      const i = need(a, "attribute");
      if (i < 0) return false;
      this.attrCols.push(i);
    }
    const mapping: Record<string, string> = { economy: this.map.economy };
    if (this.map.period) mapping.period = this.map.period;
    if (this.map.value) mapping.value = this.map.value;
    if (this.map.status) mapping.status = this.map.status;
    state.meta.mapping = mapping;
    state.meta.datasets.push({ timeDimension: this.map.period ?? null });
    if (this.opts.layout === "wide") {
      const used = new Set([this.economyCol, ...this.keyCols, ...this.attrCols]);
      const pattern = this.opts.periodColumns !== undefined ? new RegExp(this.opts.periodColumns) : null;
      this.header.forEach((h, i) => {
        if (used.has(i) || h === "") return;
        if (pattern && !pattern.test(h)) return;
        const text = DATABANK_HEADER.exec(h)?.[1] ?? h;
        const p = this.periods.get(text);
        if (isParsedPeriod(p)) this.periodColumns.push([i, p.canonical]);
        else if (pattern) state.report(p.problem, { line, column: i + 1, field: h }, p.reason, h);
      });
      if (this.periodColumns.length === 0) {
        state.collector.fatal(state.error("CSV_MISSING_COLUMN", { line, field: "periods" }, "the wide layout found no period columns in the header (such as 1960, 2019Q1, \"1960 [YR1960]\")"));
        return false;
      }
      state.meta.datasets[0]!.timeDimension = "(header)";
    }
    return true;
  }

  onRecord(fields: string[], line: number): boolean {
    const state = this.state;
    const width = this.header.length;
    if (fields.length === width + 1 && fields[width] === "") fields.pop();
    if (fields.length !== width) {
      state.report("CSV_COLUMN_COUNT_MISMATCH", { line, column: Math.min(fields.length, width) + 1 }, `the record has ${fields.length} field(s), the header has ${width}`, fields.length);
      state.skip("issue");
      return true;
    }
    const economy = fields[this.economyCol]!.trim();
    if (economy === "") {
      state.report("CSV_MISSING_COLUMN", { line, column: this.economyCol + 1, field: this.map.economy }, "the economy cell is empty");
      state.skip("issue");
      return true;
    }
    let key = economy;
    for (const c of this.keyCols) key += "\u0001" + fields[c]!;
    let dimensions = this.dimsCache.get(key);
    if (!dimensions) {
      const d: Record<string, string> = { [this.map.economy]: economy };
      for (const c of this.keyCols) d[this.header[c]!] = fields[c]!;
      dimensions = d;
      if (this.dimsCache.size >= 200_000) this.dimsCache.clear();
      this.dimsCache.set(key, dimensions);
    }
    let attributes: Readonly<Record<string, string>> = EMPTY;
    if (this.attrCols.length) {
      const a: Record<string, string> = {};
      for (const c of this.attrCols) a[this.header[c]!] = fields[c]!;
      attributes = a;
    }
    if (this.opts.layout === "long") {
      const periodText = fields[this.periodCol]!.trim();
      const p = this.periods.get(periodText);
      if (!isParsedPeriod(p)) {
        state.report(periodText === "" ? "PERIOD_MISSING" : p.problem, { line, column: this.periodCol + 1, field: this.map.period! }, periodText === "" ? "the period cell is empty" : p.reason, periodText);
        state.skip("issue");
        return true;
      }
      this.emit(key, dimensions, attributes, p.canonical, fields[this.valueCol]!, this.missing, { line, column: this.valueCol + 1, field: this.map.value! });
    } else {
      for (const [c, period] of this.periodColumns) {
        const cell = fields[c]!;
        if (cell.trim() === "") {
          state.skip("empty cell");
          continue;
        }
        this.emit(key, dimensions, attributes, period, cell, this.missingWide, { line, column: c + 1, field: this.header[c]! });
      }
    }
    return true;
  }

  private emit(
    key: string,
    dimensions: Readonly<Record<string, string>>,
    attributes: Readonly<Record<string, string>>,
    period: string,
    cell: string,
    missing: ReadonlySet<string>,
    loc: SourceLocation,
  ): void {
    const state = this.state;
    const v = readDecimal(cell, missing, this.opts.decimal === ",");
    if (v === "NOT_NUMERIC") {
      state.report("CSV_NON_NUMERIC_VALUE", loc, `${quoteValue(cell)} is not a number`, cell);
      state.skip("issue");
      return;
    }
    if (v === "NOT_FINITE") {
      state.report("VALUE_NOT_FINITE", loc, describeValueProblem("VALUE_NOT_FINITE", cell), cell);
      state.skip("issue");
      return;
    }
    if (v !== null && this.opts.nonNegative && v < 0) {
      state.report("VALUE_NEGATIVE", loc, describeValueProblem("VALUE_NEGATIVE", cell), cell);
      state.skip("issue");
      return;
    }
    if (this.opts.checkDuplicates) {
      let periods = this.seen.get(key);
      if (!periods) this.seen.set(key, (periods = new Map()));
      const first = periods.get(period);
      if (first !== undefined) {
        state.report(
          "DUPLICATE_OBSERVATION",
          loc,
          `${Object.values(dimensions).join(" / ")} in ${period} was already on line ${first}${this.opts.dimensions.length ? "" : " (are further key columns missing from `dimensions`?)"}`,
          period,
        );
        state.skip("issue");
        return;
      }
      periods.set(period, loc.line!);
    }
    const o: ParsedObservation = this.opts.locations
      ? { dimensions, period, value: v, attributes, location: this.state.file ? { file: this.state.file, ...loc } : loc }
      : { dimensions, period, value: v, attributes };
    state.counts.observations++;
    this.sink(o);
  }
}

const EMPTY: Readonly<Record<string, string>> = Object.freeze({});

/**
 * Parse a plain CSV/TSV table with a column mapping, handing each observation to `onObservation`.
 *
 * Example: parseTabularStream(file, { map: "economy=Country Code,period=Year,value=Value" }, push)
 *
 * Reference: RFC 4180 (CSV); missing-value tokens as published by the World Bank ("..") and
 * Eurostat (":").
 */
export async function parseTabularStream(input: PayloadInput, options: TabularOptions, onObservation: ObservationSink, control: StreamControl = {}): Promise<ParseSummary> {
  const opts = validateOptions(tabularOptionsSchema, options, SOURCE);
  const state = new ParseState("csv", SOURCE, opts);
  state.afterChunk = control.afterChunk;
  const reader = new TabularReader(state, opts, onObservation);
  await readCsv(input, state, {
    skipLines: opts.skipLines,
    delimiter: (line) => reader.delimiter(line),
    onHeader: (fields, line) => reader.onHeader(fields, line),
    onRecord: (fields, line) => reader.onRecord(fields, line),
  });
  return state.summary();
}

/** Parse a plain CSV/TSV table with a column mapping and return the observations with the summary. */
export async function parseTabular(input: PayloadInput, options: TabularOptions): Promise<ParseResult> {
  const observations: ParsedObservation[] = [];
  const summary = await parseTabularStream(input, options, (o) => observations.push(o));
  return { observations, ...summary };
}
