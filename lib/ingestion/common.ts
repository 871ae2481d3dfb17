/**
 * Shared machinery of the ingestion parsers: payload input, byte checks (UTF-8, byte-order marks,
 * line/column tracking), option validation, number reading, duplicate detection, result shapes and
 * the streaming JSON reader. Parsers in this folder import from here; nothing here knows a format.
 */
import { isUtf8 } from "node:buffer";
import { Tokenizer, TokenizerError, TokenParser, TokenParserError, TokenType } from "@streamparser/json";
import type { StackElement } from "@streamparser/json";
import { parse as parseCsv } from "csv-parse";
import { z } from "zod";
import { IngestError, IssueCollector, type IngestErrorCode, type IssueMode } from "./errors";
import type { RawObservation, SourceLocation } from "./types";

// ---------------------------------------------------------------------------------------------
// Result shapes

/** Format names understood by parsePayload. */
export const PAYLOAD_FORMATS = ["sdmx-json", "sdmx-csv", "jsonstat", "worldbank-json", "csv"] as const;
export type PayloadFormat = (typeof PAYLOAD_FORMATS)[number];

/**
 * An observation as the parsers emit it: a RawObservation, plus the data set or structure it
 * belongs to when a payload holds several (SDMX-CSV with several STRUCTURE_IDs, SDMX-JSON 2.x with
 * several structures, a JSON-stat collection). A ParsedObservation is a RawObservation.
 */
export interface ParsedObservation extends RawObservation {
  /** Dataflow/structure id ("ECB:EXR(1.0)") or dataset id/href; absent when the payload names none. */
  readonly dataset?: string;
}

/** A deletion instruction carried by a payload (SDMX action Delete); never an observation. */
export interface Deletion {
  readonly dataset?: string;
  /** The (possibly partial) key: dimensions that are given. Absent dimensions are wildcards. */
  readonly dimensions: Readonly<Record<string, string>>;
  /** Period to delete, when the time dimension is given. */
  readonly period?: string;
  /** Measures/attributes marked for deletion (SDMX-CSV "-"); empty: the whole observation(s). */
  readonly components: readonly string[];
  readonly location: SourceLocation;
}

/** What a payload says about one of its data sets. */
export interface DatasetMeta {
  /** Dataflow / structure id ("ECB:EXR(1.0)", "ESTAT:NA_MAIN(1.6.0)"), dataset id or href. */
  id?: string;
  label?: string;
  /** SDMX action as published (Merge, Replace, Delete, Information, Append; CSV letters expanded). */
  action?: string;
  /** JSON-stat `updated`, World Bank `lastupdated`, SDMX-CSV custom UPDATED column (first value). */
  updated?: string;
  validFrom?: string;
  validTo?: string;
  reportingBegin?: string;
  reportingEnd?: string;
  /** Attributes attached to the whole data set (SDMX data-set level), ids resolved. */
  attributes?: Record<string, string>;
  /**
   * Units where the payload declares them. SDMX: dataset-level UNIT_MEASURE / UNIT_MULT /
   * BASE_PER under "*". JSON-stat: category.unit of the metric dimension, by category id.
   */
  units?: Record<string, Record<string, string | number>>;
  /** Time dimension / column id, null when the data set has none (cross-sectional data). */
  timeDimension?: string | null;
}

/** What the message says about itself. */
export interface PayloadMeta {
  format: PayloadFormat;
  /** Format version when known: SDMX-JSON "1.0" | "2.0.0" | "2.1.0", SDMX-CSV "1.0" | "2.x", JSON-stat "2.0". */
  version?: string;
  /** Message id (SDMX header/meta id). */
  messageId?: string;
  /** When the message was prepared / the data updated: SDMX prepared, JSON-stat updated, World Bank lastupdated. */
  prepared?: string;
  sender?: string;
  datasets: DatasetMeta[];
  /** Plain CSV: which column plays which role (economy, period, value, status). */
  mapping?: Record<string, string>;
  /** World Bank paging: the connector asks for page+1 while page < pages. */
  pagination?: { page: number; pages: number; perPage: number; total: number };
  /** Deletion instructions (SDMX Delete actions); kept apart from observations. */
  deletions: Deletion[];
  /** JSON-stat collection items that are links only: the caller must fetch them. */
  links: { href: string; label?: string; class?: string }[];
  /** Status information carried next to the data (SDMX-JSON `errors`). */
  serviceErrors: { code?: number | string; title?: string; detail?: string }[];
  /** Records that produced no observation, by reason ("issue", "deletion", "attribute-only row", ...). */
  skips: Record<string, number>;
  /** Plain-language remarks about how the payload was read. */
  notes: string[];
}

export interface ParseCounts {
  observations: number;
  /** Records that did not become observations: bad records and rows skipped by rule (see meta.skips). */
  skipped: number;
  /** Problems reported, including those beyond maxIssues. */
  issues: number;
}

/** What a streaming parse returns: everything but the observations, which went to the callback. */
export interface ParseSummary {
  issues: IngestError[];
  counts: ParseCounts;
  meta: PayloadMeta;
}

/** What a collecting parse returns. */
export interface ParseResult extends ParseSummary {
  observations: ParsedObservation[];
}

export type ObservationSink = (observation: ParsedObservation) => void;

/** An empty PayloadMeta for a format. */
export function newMeta(format: PayloadFormat): PayloadMeta {
  return { format, datasets: [], deletions: [], links: [], serviceErrors: [], skips: {}, notes: [] };
}

/** Book-keeping of one parse: counts, skip reasons, issue collector. */
export class ParseState {
  readonly collector: IssueCollector;
  readonly counts: ParseCounts = { observations: 0, skipped: 0, issues: 0 };
  readonly meta: PayloadMeta;
  readonly source: string;
  readonly file: string | undefined;
  /** Awaited after each input chunk: lets a consumer (async iterator) slow the parser down. */
  afterChunk: (() => Promise<void> | void) | undefined;

  constructor(format: PayloadFormat, source: string, options: { mode: IssueMode; maxIssues: number; file?: string }) {
    this.collector = new IssueCollector(options.mode, options.maxIssues);
    this.meta = newMeta(format);
    this.source = source;
    this.file = options.file;
  }

  /** Build an error of this parser with the file name filled in. */
  error(code: IngestErrorCode, location: SourceLocation, detail: string, value?: unknown): IngestError {
    return new IngestError(code, this.source, this.file && !location.file ? { file: this.file, ...location } : location, detail, value);
  }

  /** Report a problem (throws in strict mode). */
  report(code: IngestErrorCode, location: SourceLocation, detail: string, value?: unknown): void {
    this.collector.report(this.error(code, location, detail, value));
  }

  skip(reason: string, n = 1): void {
    this.counts.skipped += n;
    this.meta.skips[reason] = (this.meta.skips[reason] ?? 0) + n;
  }

  note(text: string): void {
    if (!this.meta.notes.includes(text)) this.meta.notes.push(text);
  }

  summary(): ParseSummary {
    this.counts.issues = this.collector.count;
    return { issues: this.collector.issues, counts: this.counts, meta: this.meta };
  }
}

// ---------------------------------------------------------------------------------------------
// Options

/** Options every parser takes. */
export const baseOptionsShape = {
  /** strict: throw the first IngestError; collect: return every problem in `issues`. */
  mode: z.enum(["strict", "collect"]).default("strict"),
  /** The concept is a count: negative values are VALUE_NEGATIVE. */
  nonNegative: z.boolean().default(false),
  /** File name or URL, copied into every location. */
  file: z.string().min(1).optional(),
  /** Report DUPLICATE_OBSERVATION for the same dimensions + period twice. Default true. */
  checkDuplicates: z.boolean().default(true),
  /** Collect mode keeps this many issues (all are counted). */
  maxIssues: z.number().int().positive().default(1000),
  /** Attach a SourceLocation to every observation (costs memory on large payloads). Default false. */
  locations: z.boolean().default(false),
};

export type BaseOptions = {
  mode: IssueMode;
  nonNegative: boolean;
  file?: string;
  checkDuplicates: boolean;
  maxIssues: number;
  locations: boolean;
};

/**
 * Validate options with a zod schema before any byte is read. Misuse is not a data problem: it
 * always throws (OPTIONS_INVALID naming the option), in collect mode too.
 */
export function validateOptions<S extends z.ZodType>(schema: S, raw: unknown, source: string): z.output<S> {
  const result = schema.safeParse(raw ?? {});
  if (result.success) return result.data;
  const first = result.error.issues[0]!;
  const field = first.path.length ? first.path.join(".") : first.code === "unrecognized_keys" ? (first as { keys?: string[] }).keys?.join(", ") : undefined;
  const all = result.error.issues.map((i) => `${i.path.length ? i.path.join(".") : "(options)"}: ${i.message}`).join("; ");
  throw new IngestError("OPTIONS_INVALID", source, field ? { field } : {}, `invalid options: ${all}`);
}

// ---------------------------------------------------------------------------------------------
// Input

/** A payload: text, bytes, or a stream of either (a Node Readable is an AsyncIterable). */
export type PayloadInput = string | Uint8Array | AsyncIterable<Uint8Array | string>;

/** Hooks a caller can pass to a streaming parser. */
export interface StreamControl {
  /** Awaited after each input chunk has been parsed (backpressure for async iteration). */
  afterChunk?: () => Promise<void> | void;
}

/** Normalise any PayloadInput into an async sequence of Buffers. */
export async function* payloadChunks(input: PayloadInput): AsyncGenerator<Buffer> {
  if (typeof input === "string") {
    yield Buffer.from(input, "utf8");
    return;
  }
  if (input instanceof Uint8Array) {
    yield Buffer.isBuffer(input) ? input : Buffer.from(input.buffer, input.byteOffset, input.byteLength);
    return;
  }
  for await (const chunk of input) {
    if (typeof chunk === "string") yield Buffer.from(chunk, "utf8");
    else yield Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength);
  }
}

const BOM = Buffer.from([0xef, 0xbb, 0xbf]);

/** Number of bytes at the end of `b` that start a UTF-8 sequence not yet complete (0-3). */
function incompleteTail(b: Buffer): number {
  const n = b.length;
  for (let back = 1; back <= 3 && back <= n; back++) {
    const byte = b[n - back]!;
    if ((byte & 0xc0) === 0x80) continue; // continuation byte: keep looking for the lead
    const need = byte >= 0xf0 ? 4 : byte >= 0xe0 ? 3 : byte >= 0xc0 ? 2 : 1;
    return need > back ? back : 0;
  }
  return 0;
}

/** Index of the first byte in `b` (from `from`) that breaks UTF-8, or -1. */
function firstInvalidUtf8(b: Buffer, from = 0): number {
  let i = from;
  const n = b.length;
  while (i < n) {
    const c = b[i]!;
    if (c < 0x80) {
      i++;
      continue;
    }
    let need: number;
    let min: number;
    if (c >= 0xc2 && c <= 0xdf) {
      need = 1;
      min = 0x80;
    } else if (c >= 0xe0 && c <= 0xef) {
      need = 2;
      min = 0x800;
    } else if (c >= 0xf0 && c <= 0xf4) {
      need = 3;
      min = 0x10000;
    } else return i;
    if (i + need >= n) return i; // truncated sequence
    let cp = c & (need === 1 ? 0x1f : need === 2 ? 0x0f : 0x07);
    for (let k = 1; k <= need; k++) {
      const cc = b[i + k];
      if (cc === undefined || (cc & 0xc0) !== 0x80) return i;
      cp = (cp << 6) | (cc & 0x3f);
    }
    if (cp < min || cp > 0x10ffff || (cp >= 0xd800 && cp <= 0xdfff)) return i;
    i += need + 1;
  }
  return -1;
}

/**
 * Checks the bytes of a payload as they stream past: UTF-8 validity, byte-order marks (leading one
 * removed, any later one reported) and line/column bookkeeping, so that a byte offset can be turned
 * into "line 3, column 17" (1-based; column counts characters).
 */
export class ByteScanner {
  private carry: Buffer = Buffer.alloc(0);
  private chunkStart = 0;
  private chunk: Buffer = Buffer.alloc(0);
  /** Recent chunks with their line/column bases, so a token that began a few chunks back can be placed. */
  private history: { chunk: Buffer; start: number; lines: number; col: number }[] = [];
  private historyBytes = 0;
  /** Newlines before the current chunk, and characters since the last of them. */
  private lines = 0;
  private col = 0;
  private tailBom: Buffer = Buffer.alloc(0);
  /** Total bytes seen, including a stripped leading BOM. */
  total = 0;
  /** True once a non-whitespace byte was seen (for EMPTY_PAYLOAD). */
  sawContent = false;
  private first = true;
  /** 3 when a leading byte-order mark was removed: add to offsets counted after it. */
  bomShift = 0;
  private readonly strayBom: "error" | "allow";
  private readonly state: ParseState;

  constructor(state: ParseState, strayBom: "error" | "allow") {
    this.state = state;
    this.strayBom = strayBom;
  }

  /**
   * Check one chunk. Returns the bytes to parse (a leading BOM removed), or null after reporting a
   * problem that stops reading (invalid UTF-8, stray BOM when not allowed).
   */
  accept(input: Buffer): Buffer | null {
    let chunk = input;
    let offsetShift = 0;
    if (this.first && chunk.length > 0) {
      this.first = false;
      if (chunk.length >= 3 && chunk[0] === 0xef && chunk[1] === 0xbb && chunk[2] === 0xbf) {
        chunk = chunk.subarray(3);
        offsetShift = 3;
        this.bomShift = 3;
      }
    }
    // advance() of the previous chunk moved chunkStart to the end of it.
    this.chunkStart += offsetShift;
    this.total += input.length;
    this.chunk = chunk;
    if (!this.sawContent) {
      for (let i = 0; i < chunk.length; i++) {
        const c = chunk[i]!;
        if (c !== 0x20 && c !== 0x0a && c !== 0x0d && c !== 0x09) {
          this.sawContent = true;
          break;
        }
      }
    }
    // UTF-8: validate carry + chunk, keeping an incomplete trailing sequence for the next chunk.
    const tail = incompleteTail(chunk);
    let ok: boolean;
    if (this.carry.length) {
      const joined = Buffer.concat([this.carry, chunk.subarray(0, chunk.length - tail)]);
      ok = isUtf8(joined);
      if (!ok) return this.invalid(joined, this.chunkStart - this.carry.length);
    } else {
      const body = chunk.subarray(0, chunk.length - tail);
      ok = isUtf8(body);
      if (!ok) return this.invalid(body, this.chunkStart);
    }
    this.carry = tail ? Buffer.from(chunk.subarray(chunk.length - tail)) : Buffer.alloc(0);
    // Byte-order marks after the start.
    if (this.strayBom === "error") {
      let at = chunk.indexOf(BOM);
      let found = at >= 0;
      if (!found && this.tailBom.length) {
        // A mark split across two chunks.
        const seam = Buffer.concat([this.tailBom, chunk.subarray(0, 2)]);
        const s = seam.indexOf(BOM);
        if (s >= 0) {
          found = true;
          at = s - this.tailBom.length;
        }
      }
      if (found) {
        const loc = this.locate(this.chunkStart + at);
        this.state.collector.fatal(
          this.state.error("ENCODING_STRAY_BOM", loc, "a UTF-8 byte-order mark (U+FEFF) inside the payload: were two files joined?", "\uFEFF"),
        );
        return null;
      }
      this.tailBom = Buffer.from(chunk.subarray(Math.max(0, chunk.length - 2)));
    }
    return chunk;
  }

  private invalid(bytes: Buffer, startOffset: number): null {
    const i = firstInvalidUtf8(bytes);
    const at = startOffset + Math.max(0, i);
    const bad = bytes.subarray(Math.max(0, i), Math.max(0, i) + 4);
    this.state.collector.fatal(
      this.state.error("ENCODING_INVALID", this.locate(at), `bytes ${[...bad].map((b) => b.toString(16).padStart(2, "0")).join(" ")} are not UTF-8`),
    );
    return null;
  }

  /** At end of input: report a UTF-8 sequence cut off by the end. Returns false when reported. */
  finish(): boolean {
    if (this.carry.length) {
      const at = this.chunkStart - this.carry.length;
      this.state.collector.fatal(this.state.error("ENCODING_INVALID", this.locate(at), "the payload ends inside a UTF-8 character"));
      return false;
    }
    return true;
  }

  /** Call after the current chunk has been fully processed. */
  advance(): void {
    const chunk = this.chunk;
    this.history.push({ chunk, start: this.chunkStart, lines: this.lines, col: this.col });
    this.historyBytes += chunk.length;
    while (this.history.length > 2 && (this.history.length > 64 || this.historyBytes - this.history[0]!.chunk.length >= 1 << 18)) {
      this.historyBytes -= this.history.shift()!.chunk.length;
    }
    let nl = -1;
    let count = 0;
    for (let i = chunk.indexOf(10); i >= 0; i = chunk.indexOf(10, i + 1)) {
      count++;
      nl = i;
    }
    this.lines += count;
    this.col = count ? charsIn(chunk, nl + 1, chunk.length) : this.col + charsIn(chunk, 0, chunk.length);
    this.chunkStart += chunk.length;
    this.chunk = Buffer.alloc(0);
  }

  /** Absolute byte offset of the first byte of the chunk being processed. */
  get offset(): number {
    return this.chunkStart;
  }

  /** Line and column (1-based, column in characters) of an absolute byte offset. */
  locate(abs: number): SourceLocation {
    let chunk = this.chunk;
    let start = this.chunkStart;
    let lines = this.lines;
    let col = this.col;
    if (abs < start) {
      for (let i = this.history.length - 1; i >= 0; i--) {
        const h = this.history[i]!;
        if (abs >= h.start) {
          chunk = h.chunk;
          start = h.start;
          lines = h.lines;
          col = h.col;
          break;
        }
      }
    }
    const rel = Math.max(0, Math.min(abs - start, chunk.length));
    let nl = -1;
    let count = 0;
    for (let i = chunk.indexOf(10); i >= 0 && i < rel; i = chunk.indexOf(10, i + 1)) {
      count++;
      nl = i;
    }
    const line = lines + count + 1;
    const column = count ? charsIn(chunk, nl + 1, rel) + 1 : col + charsIn(chunk, 0, rel) + 1;
    return { line, column };
  }

  /** Location just past the last byte seen. */
  endLocation(): SourceLocation {
    return this.locate(this.chunkStart + this.chunk.length);
  }
}

/** Characters (code points) encoded in b[from, to): bytes that are not UTF-8 continuation bytes. */
function charsIn(b: Buffer, from: number, to: number): number {
  let n = 0;
  for (let i = from; i < to; i++) if ((b[i]! & 0xc0) !== 0x80) n++;
  return n;
}

// ---------------------------------------------------------------------------------------------
// Numbers

const INFINITY_RE = /^[+-]?(?:inf|infinity)$/i;

/** True when `t` is a plain decimal number: [+-]digits[.digits][e[+-]digits], at least one digit before the exponent. */
export function isDecimalText(t: string): boolean {
  const n = t.length;
  let i = 0;
  let c = n ? t.charCodeAt(0) : 0;
  if (c === 43 || c === 45) i++;
  let digits = 0;
  while (i < n && (c = t.charCodeAt(i)) >= 48 && c <= 57) {
    i++;
    digits++;
  }
  if (i < n && t.charCodeAt(i) === 46) {
    i++;
    while (i < n && (c = t.charCodeAt(i)) >= 48 && c <= 57) {
      i++;
      digits++;
    }
  }
  if (digits === 0) return false;
  if (i < n && ((c = t.charCodeAt(i)) === 101 || c === 69)) {
    i++;
    if (i < n && ((c = t.charCodeAt(i)) === 43 || c === 45)) i++;
    let e = 0;
    while (i < n && (c = t.charCodeAt(i)) >= 48 && c <= 57) {
      i++;
      e++;
    }
    if (e === 0) return false;
  }
  return i === n;
}

/** Outcome of reading a value cell: a number, an explicit missing value, or a problem code. */
export type CellValue = number | null | "NOT_NUMERIC" | "NOT_FINITE";

/**
 * Read a decimal number from text. `missing` lists the tokens that mean "explicitly missing"
 * (they give null); `decimalComma` accepts "12,4" for 12.4. Surrounding spaces are ignored.
 * Infinity spellings and magnitudes beyond 1e300 give "NOT_FINITE", other text "NOT_NUMERIC".
 */
export function readDecimal(text: string, missing: ReadonlySet<string>, decimalComma: boolean): CellValue {
  let t = text;
  if (missing.has(t)) return null;
  if (t.length && (t.charCodeAt(0) === 32 || t.charCodeAt(t.length - 1) === 32)) {
    t = t.trim();
    if (missing.has(t)) return null;
  }
  if (decimalComma) {
    const c = t.indexOf(",");
    if (c >= 0) {
      if (t.indexOf(".") >= 0) return "NOT_NUMERIC";
      t = t.slice(0, c) + "." + t.slice(c + 1);
    }
  }
  if (!isDecimalText(t)) return INFINITY_RE.test(t) ? "NOT_FINITE" : "NOT_NUMERIC";
  const v = +t;
  return v <= 1e300 && v >= -1e300 ? v : "NOT_FINITE";
}

/** Largest magnitude accepted as a value (beyond it: VALUE_NOT_FINITE). */
export const MAX_MAGNITUDE = 1e300;

/**
 * Check a number that is about to become an observation value. Returns the problem code, or
 * null when the value is acceptable.
 */
export function valueProblem(v: number, nonNegative: boolean): "VALUE_NOT_FINITE" | "VALUE_NEGATIVE" | null {
  if (!(v <= MAX_MAGNITUDE && v >= -MAX_MAGNITUDE)) return "VALUE_NOT_FINITE"; // also NaN
  if (nonNegative && v < 0) return "VALUE_NEGATIVE";
  return null;
}

/** Human wording for valueProblem codes. */
export function describeValueProblem(code: "VALUE_NOT_FINITE" | "VALUE_NEGATIVE", v: unknown): string {
  return code === "VALUE_NOT_FINITE"
    ? `${typeof v === "string" ? `'${v}'` : String(v)} is not a finite number within ±1e300`
    : `${String(v)} is negative, but the concept is a count (nonNegative)`;
}

// ---------------------------------------------------------------------------------------------
// Duplicates

/**
 * Remembers which (series key, period) pairs a payload has already produced. Series keys are the
 * joined dimension values (plus data set); the value kept is the line of the first occurrence
 * (0 when the format has no lines).
 */
export class DuplicateIndex {
  private readonly series = new Map<string, Map<string, number>>();

  /** The periods seen so far for one series (created empty): period -> first line. */
  periodsOf(seriesKey: string): Map<string, number> {
    let periods = this.series.get(seriesKey);
    if (periods === undefined) {
      periods = new Map();
      this.series.set(seriesKey, periods);
    }
    return periods;
  }

  /** Returns the first line (or 0) when (seriesKey, period) was seen before; records it otherwise. */
  seen(seriesKey: string, period: string, line: number): number | undefined {
    let periods = this.series.get(seriesKey);
    if (periods === undefined) {
      periods = new Map();
      this.series.set(seriesKey, periods);
    }
    const first = periods.get(period);
    if (first !== undefined) return first;
    periods.set(period, line);
    return undefined;
  }
}

// ---------------------------------------------------------------------------------------------
// Streaming JSON

export interface JsonValueEvent {
  value: unknown;
  key: string | number | undefined;
  /** Keys from the root to the value's parent (root excluded), e.g. ["data", "dataSets", 0, "series"]. */
  path: (string | number)[];
}

export interface ReadJsonOptions {
  /** Paths to emit (subset of JSONPath: `$`, `$.a.b`, `$.*.b`), see @streamparser/json. */
  paths: string[];
  onValue(event: JsonValueEvent): void;
  /**
   * Objects whose members need no duplicate-name check because the caller receives and checks
   * them one by one (large `series` / `observations` maps). Gets the names from the root down to
   * the object, e.g. ["data", "dataSets", 0, "series"].
   */
  skipKeyCheck?: (names: readonly (string | number | undefined)[]) => boolean;
}

function pathOf(stack: StackElement[]): (string | number)[] {
  const out: (string | number)[] = new Array(Math.max(0, stack.length - 1));
  for (let i = 1; i < stack.length; i++) out[i - 1] = stack[i]!.key as string | number;
  return out;
}

/**
 * Read a JSON payload as a stream and emit the values at `paths`. Reports, with line and column:
 * EMPTY_PAYLOAD, ENCODING_INVALID, ENCODING_STRAY_BOM (outside strings), JSON_SYNTAX,
 * JSON_TRUNCATED, and JSON_DUPLICATE_KEY (non-fatal; the later member wins, as in JSON.parse).
 * Returns true when the whole value was read, false after a fatal problem in collect mode.
 * Errors thrown by `onValue` propagate (strict mode).
 */
export async function readJson(input: PayloadInput, state: ParseState, options: ReadJsonOptions): Promise<boolean> {
  const scanner = new ByteScanner(state, "allow");
  const tokenizer = new Tokenizer();
  const parser = new TokenParser({ paths: options.paths, keepStack: false });
  // A light stack of open containers, kept in parallel arrays (no allocation per array token):
  // whether each is an object, the member names seen (for duplicate detection), the index of the
  // current element (arrays) or the last member name (objects), and the container's own name.
  const isObj: boolean[] = [];
  const keySets: (Set<string> | null)[] = [];
  const indexes: number[] = [];
  const lastKeys: (string | undefined)[] = [];
  const names: (string | number | undefined)[] = [];
  let depth = 0;
  const skipKeyCheck = options.skipKeyCheck;
  let expectKey = false;
  let tokenOffset = 0;
  let duplicate: { key: string; offset: number } | null = null;

  parser.onValue = (info) => {
    options.onValue({ value: info.value, key: info.key, path: pathOf(info.stack) });
  };
  tokenizer.onToken = (info) => {
    const token = info.token;
    tokenOffset = info.offset;
    switch (token) {
      case TokenType.LEFT_BRACE:
      case TokenType.LEFT_BRACKET: {
        const name = depth === 0 ? undefined : isObj[depth - 1] ? lastKeys[depth - 1] : indexes[depth - 1];
        const object = token === TokenType.LEFT_BRACE;
        let keys: Set<string> | null = null;
        if (object) {
          keys = new Set();
          if (skipKeyCheck) {
            const path = names.slice(1, depth);
            if (depth > 0) path.push(name);
            if (skipKeyCheck(path)) keys = null;
          }
        }
        isObj[depth] = object;
        keySets[depth] = keys;
        indexes[depth] = 0;
        lastKeys[depth] = undefined;
        names[depth] = name;
        depth++;
        expectKey = object;
        break;
      }
      case TokenType.RIGHT_BRACE:
      case TokenType.RIGHT_BRACKET:
        if (depth > 0) {
          depth--;
          keySets[depth] = null;
        }
        expectKey = false;
        break;
      case TokenType.COMMA:
        if (depth > 0) {
          if (isObj[depth - 1]) expectKey = true;
          else indexes[depth - 1]!++;
        }
        break;
      case TokenType.STRING:
        if (expectKey) {
          expectKey = false;
          const key = info.value as string;
          lastKeys[depth - 1] = key;
          const set = keySets[depth - 1];
          if (set) {
            if (set.has(key)) duplicate = { key, offset: info.offset };
            else set.add(key);
          }
        }
        break;
      default:
        break;
    }
    parser.write(info);
    if (duplicate) {
      const d = duplicate;
      duplicate = null;
      state.report("JSON_DUPLICATE_KEY", scanner.locate(d.offset + scanner.bomShift), `member "${d.key}" appears twice in one object; the later one is used`, d.key);
    }
  };

  const syntax = (err: unknown): void => {
    const message = err instanceof Error ? err.message : String(err);
    const m = /absolute position "(\d+)"/.exec(message);
    const offset = err instanceof TokenizerError && m ? Number(m[1]) : tokenOffset;
    const loc = scanner.locate(offset + scanner.bomShift);
    const unexpected = /Unexpected "([^"]|")"/.exec(message)?.[1];
    if (unexpected === "\u00ef") {
      // EF BB BF where a token should start: a byte-order mark in the middle.
      state.collector.fatal(state.error("ENCODING_STRAY_BOM", loc, "a UTF-8 byte-order mark (U+FEFF) inside the JSON text: were two files joined?"));
      return;
    }
    if (/state ENDED/.test(message)) {
      state.collector.fatal(state.error("JSON_SYNTAX", loc, "text after the end of the JSON value"));
      return;
    }
    let what: string;
    if (unexpected !== undefined) what = `unexpected character ${JSON.stringify(unexpected)}`;
    else {
      const t = /Unexpected (\w+)/.exec(message)?.[1];
      what = t ? `unexpected ${t.toLowerCase().replace(/_/g, " ")}` : message;
    }
    state.collector.fatal(state.error("JSON_SYNTAX", loc, `not valid JSON: ${what}`));
  };

  for await (const raw of payloadChunks(input)) {
    const chunk = scanner.accept(raw);
    if (chunk === null) return false;
    if (chunk.length) {
      try {
        tokenizer.write(chunk);
      } catch (err) {
        if (err instanceof IngestError) throw err;
        if (err instanceof TokenizerError || err instanceof TokenParserError) {
          syntax(err);
          return false;
        }
        throw err;
      }
    }
    scanner.advance();
    if (state.afterChunk) await state.afterChunk();
  }
  if (!scanner.finish()) return false;
  if (!scanner.sawContent) {
    state.collector.fatal(state.error("EMPTY_PAYLOAD", scanner.total ? { line: 1, column: 1 } : {}, "the payload is empty"));
    return false;
  }
  const endLoc = scanner.endLocation();
  try {
    tokenizer.end();
  } catch (err) {
    if (err instanceof IngestError) throw err;
    state.collector.fatal(state.error("JSON_TRUNCATED", endLoc, "the JSON text ends in the middle of a value (truncated download?)"));
    return false;
  }
  if (!parser.isEnded) {
    state.collector.fatal(state.error("JSON_TRUNCATED", endLoc, "the JSON text ends before its objects and arrays are closed (truncated download?)"));
    return false;
  }
  return true;
}

/** Read a whole JSON document (small payloads: JSON-stat, World Bank) with the same checks as readJson. */
export async function readJsonDocument(input: PayloadInput, state: ParseState): Promise<{ ok: true; value: unknown } | { ok: false }> {
  let root: unknown;
  const ok = await readJson(input, state, {
    paths: ["$"],
    onValue: (e) => {
      root = e.value;
    },
  });
  return ok ? { ok: true, value: root } : { ok: false };
}

// ---------------------------------------------------------------------------------------------
// Streaming CSV (csv-parse)

/** The parts of csv-parse's parser core used here (`Parser.api`, the engine behind its stream). */
interface CsvCore {
  parse(buf: Buffer | undefined, end: boolean, push: (record: string[]) => void, close: () => void): Error | undefined;
  info: { lines: number; empty_lines: number; comment_lines: number; records: number };
}

export interface ReadCsvOptions {
  /** Lines to skip before the header (preambles such as World Bank bulk downloads). Default 0. */
  skipLines?: number;
  /**
   * Called with the text of the header line (first line after skipLines, BOM removed). Returns the
   * field delimiter to use, or null after reporting why the header is not acceptable.
   */
  delimiter(headerLine: string, headerLocation: SourceLocation): string | null;
  /** The header record. Return false to stop (after reporting). */
  onHeader(fields: string[], line: number): boolean;
  /** A data record with the 1-based line it starts on. Return false to stop. */
  onRecord(fields: string[], line: number): boolean | void;
}

/**
 * Read CSV/TSV as a stream with csv-parse: byte checks (UTF-8, stray byte-order marks), delimiter
 * detection from the header line, and the 1-based line where each record starts (records with
 * quoted line breaks span several lines). Quoting errors become CSV_SYNTAX with their line.
 * Returns true when the whole payload was read.
 */
export async function readCsv(input: PayloadInput, state: ParseState, options: ReadCsvOptions): Promise<boolean> {
  const scanner = new ByteScanner(state, "error");
  const skipLines = options.skipLines ?? 0;
  let core: CsvCore | null = null;
  let head: Buffer[] = [];
  let headBytes = 0;
  let stopped = false;
  let headerSeen = false;
  // Line bookkeeping. csv-parse reports the line a record ends on, but inside quoted fields it
  // counts "\r\n" as two lines; so the start of each record is derived from the previous one:
  // its start, plus the line breaks inside its fields, plus one, plus empty lines skipped since.
  let prevEnd = skipLines;
  let prevEmpty = 0;
  let prevComment = 0;
  let nextStart = skipLines + 1;

  const push = (record: string[]): void => {
    if (stopped || core === null) return;
    const info = core.info;
    const skipped = info.empty_lines - prevEmpty + (info.comment_lines - prevComment);
    const start = headerSeen ? nextStart + skipped : info.lines;
    let breaks = 0;
    if (info.lines - prevEnd > 1 + skipped && headerSeen) {
      // A record with quoted line breaks: count them as a reader would (CRLF, LF or CR = one).
      for (const field of record) breaks += lineBreaks(field);
    }
    nextStart = start + 1 + breaks;
    prevEnd = info.lines;
    prevEmpty = info.empty_lines;
    prevComment = info.comment_lines;
    if (!headerSeen) {
      headerSeen = true;
      if (!options.onHeader(record, start)) stopped = true;
      return;
    }
    if (options.onRecord(record, start) === false) stopped = true;
  };
  const close = (): void => {};

  const feed = (buf: Buffer | undefined, end: boolean): boolean => {
    if (core === null) return true;
    let err: Error | undefined;
    try {
      err = core.parse(buf, end, push, close);
    } catch (e) {
      if (e instanceof IngestError) throw e;
      err = e as Error;
    }
    if (err) {
      const e = err as Error & { code?: string; lines?: number; column?: number | string; index?: number };
      // Report the line where the broken record starts (an unclosed quote runs to the end).
      const info = core.info;
      const recordStart = headerSeen ? nextStart + (info.empty_lines - prevEmpty) + (info.comment_lines - prevComment) : skipLines + 1;
      const loc: SourceLocation = { line: Math.min(recordStart, e.lines ?? recordStart) };
      if (typeof e.index === "number") loc.column = e.index + 1;
      const what =
        e.code === "CSV_QUOTE_NOT_CLOSED"
          ? "a quoted field is not closed before the end of the payload"
          : e.code === "CSV_INVALID_CLOSING_QUOTE"
            ? "a closing quote is followed by text other than a delimiter (a stray double quote inside a field?)"
            : e.message;
      state.collector.fatal(state.error("CSV_SYNTAX", loc, what));
      return false;
    }
    return true;
  };

  const start = (buf: Buffer): boolean => {
    // Text of the header line: after skipLines newlines.
    let pos = 0;
    for (let i = 0; i < skipLines; i++) {
      const nl = buf.indexOf(10, pos);
      if (nl < 0) {
        pos = buf.length;
        break;
      }
      pos = nl + 1;
    }
    let end = buf.indexOf(10, pos);
    if (end < 0) end = buf.length;
    const headerLine = buf.toString("utf8", pos, end).replace(/\r$/, "");
    const delimiter = options.delimiter(headerLine, { line: skipLines + 1, column: 1 });
    if (delimiter === null) return false;
    const parser = parseCsv({
      delimiter,
      relax_column_count: true,
      skip_empty_lines: true,
      from_line: skipLines + 1,
    }) as unknown as { api: CsvCore };
    core = parser.api;
    return true;
  };

  for await (const raw of payloadChunks(input)) {
    const chunk = scanner.accept(raw);
    if (chunk === null) return false;
    if (core === null) {
      head.push(chunk);
      headBytes += chunk.length;
      const joined = head.length === 1 ? head[0]! : Buffer.concat(head, headBytes);
      // Wait for the end of the header line (after the preamble).
      let newlines = 0;
      for (let i = joined.indexOf(10); i >= 0 && newlines <= skipLines; i = joined.indexOf(10, i + 1)) newlines++;
      if (newlines > skipLines) {
        head = [];
        if (!start(joined)) return false;
        if (!feed(joined, false)) return false;
      } else {
        head = [joined];
      }
    } else if (!feed(chunk, false)) return false;
    if (stopped) return false;
    scanner.advance();
    if (state.afterChunk) await state.afterChunk();
  }
  if (!scanner.finish()) return false;
  if (core === null) {
    const joined = Buffer.concat(head, headBytes);
    if (!scanner.sawContent) {
      state.collector.fatal(state.error("EMPTY_PAYLOAD", scanner.total ? { line: 1, column: 1 } : {}, "the payload is empty"));
      return false;
    }
    if (!start(joined)) return false;
    if (!feed(joined, false)) return false;
  }
  if (!feed(undefined, true)) return false;
  if (stopped) return false;
  if (!headerSeen) {
    state.collector.fatal(state.error("EMPTY_PAYLOAD", { line: skipLines + 1 }, "the payload has no header line"));
    return false;
  }
  return true;
}

/** Line breaks in a text: CRLF, LF or a lone CR each count once. */
function lineBreaks(text: string): number {
  let n = 0;
  for (let i = text.indexOf("\n"); i >= 0; i = text.indexOf("\n", i + 1)) n++;
  for (let i = text.indexOf("\r"); i >= 0; i = text.indexOf("\r", i + 1)) if (text.charCodeAt(i + 1) !== 10) n++;
  return n;
}

/**
 * Pick the delimiter of a plain CSV/TSV header line: the one of `,` `;` tab `|` that occurs most
 * often outside double quotes (a single-column header gives ",").
 */
export function guessDelimiter(headerLine: string): string {
  const counts: Record<string, number> = { ",": 0, ";": 0, "\t": 0, "|": 0 };
  let quoted = false;
  for (const ch of headerLine) {
    if (ch === '"') quoted = !quoted;
    else if (!quoted && ch in counts) counts[ch]!++;
  }
  let best = ",";
  for (const d of [",", ";", "\t", "|"]) if (counts[d]! > counts[best]!) best = d;
  return best;
}
