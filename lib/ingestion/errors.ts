/**
 * Ingestion errors: every problem has a code from a fixed list and a place.
 *
 * A parser either throws the first IngestError (strict mode) or hands every one of them to an
 * IssueCollector (collect mode), so a user sees all bad records of a payload at once.
 */
import type { SourceLocation } from "./types";

/**
 * The fixed list of ingestion problem codes. Grouped by layer: options and bytes, JSON, CSV,
 * SDMX, JSON-stat, World Bank, values and periods. The list only grows; codes are never renamed.
 */
export const INGEST_ERROR_CODES = [
  // options and bytes
  "OPTIONS_INVALID", // options failed validation before the first byte was read
  "EMPTY_PAYLOAD", // no bytes, or only whitespace / a byte-order mark
  "ENCODING_INVALID", // bytes that are not UTF-8
  "ENCODING_STRAY_BOM", // a UTF-8 byte-order mark after the start of the payload
  // JSON
  "JSON_SYNTAX", // not JSON at the given line and column
  "JSON_TRUNCATED", // the JSON text ends before its value is complete
  "JSON_DUPLICATE_KEY", // the same member name twice in one JSON object
  "JSON_UNEXPECTED_SHAPE", // valid JSON, but not the documented shape of the format
  // CSV
  "CSV_SYNTAX", // quoting error or similar, as reported by the CSV tokenizer
  "CSV_MISSING_COLUMN", // a required column is not in the header
  "CSV_DUPLICATE_COLUMN", // two header cells with the same name
  "CSV_COLUMN_COUNT_MISMATCH", // a record has more or fewer fields than the header
  "CSV_NON_NUMERIC_VALUE", // a value cell that is not a number nor a missing-value token
  "CSV_HEADER_INVALID", // the header is not the one the format prescribes
  // SDMX (JSON and CSV)
  "SDMX_MISSING_STRUCTURE", // a data set refers to a structure the message does not contain
  "SDMX_MISSING_DIMENSION", // a dimension value is absent where the key needs one
  "SDMX_KEY_LENGTH_MISMATCH", // a series or observation key has the wrong number of positions
  "SDMX_INDEX_OUT_OF_RANGE", // a key or attribute index points past the values of its component
  "SDMX_VALUE_NOT_NUMERIC", // a measure value that is neither a number, null nor "NaN"
  "SDMX_FIELD_ORDER", // (streaming) a data-set field that changes the meaning of observations came after them
  "SDMX_SERVICE_ERROR", // the message carries only errors (SDMX-JSON `errors`), no data
  "SDMX_UNKNOWN_ACTION", // an action that is not one of the documented ones
  // JSON-stat
  "JSONSTAT_SIZE_MISMATCH", // size does not match id, the categories, or the value count
  "JSONSTAT_INDEX_OUT_OF_RANGE", // a sparse value or status key beyond the product of sizes
  "JSONSTAT_UNSUPPORTED", // a class or version this parser does not read
  "JSONSTAT_VALUE_NOT_NUMERIC", // a string value in a dataset read as numbers
  // World Bank indicators API
  "WORLDBANK_API_ERROR", // the API answered with its error message body
  "WORLDBANK_VALUE_NOT_NUMERIC", // a value that is neither a number nor null
  // values
  "VALUE_NOT_FINITE", // Infinity, NaN arithmetic or a magnitude beyond 1e300
  "VALUE_NEGATIVE", // a negative value where the caller declared the concept a count
  "DUPLICATE_OBSERVATION", // the same dimensions and period twice in one payload
  // periods
  "PERIOD_UNKNOWN_FORMAT", // a period in none of the SDMX reporting-period forms
  "PERIOD_INVALID", // the form is known but the numbers are not (2019-13, 2019-Q5, 2019-02-30)
  "PERIOD_MISSING", // no period where one is required
] as const;

export type IngestErrorCode = (typeof INGEST_ERROR_CODES)[number];

const CODE_SET: ReadonlySet<string> = new Set(INGEST_ERROR_CODES);

/** True when `code` is one of the fixed ingestion codes. */
export function isIngestErrorCode(code: string): code is IngestErrorCode {
  return CODE_SET.has(code);
}

/** Quote a value for a message: strings in single quotes, shortened past 60 characters. */
export function quoteValue(value: unknown): string {
  let text: string;
  if (typeof value === "string") text = value;
  else if (value === undefined) text = "undefined";
  else {
    try {
      text = JSON.stringify(value) ?? String(value);
    } catch {
      text = String(value);
    }
  }
  if (text.length > 60) text = `${text.slice(0, 57)}...`;
  return typeof value === "string" ? `'${text}'` : text;
}

/**
 * Describe a location in words: "data.csv line 12, column 4 (field OBS_VALUE)",
 * "$.dataSets[0].series[\"0:1\"] (field OBS_STATUS)". Empty string when nothing is known.
 */
export function describeLocation(location: SourceLocation): string {
  const parts: string[] = [];
  if (location.file) parts.push(location.file);
  if (location.line !== undefined) {
    parts.push(location.column !== undefined ? `line ${location.line}, column ${location.column}` : `line ${location.line}`);
  }
  if (location.path) parts.push(location.path);
  let text = parts.join(" ");
  if (location.field !== undefined) text = text ? `${text} (field ${location.field})` : `field ${location.field}`;
  return text;
}

/**
 * The one ingestion error type.
 *
 * `code` is from INGEST_ERROR_CODES, `source` names the parser ("sdmx-csv", "jsonstat", ...),
 * `location` the place (1-based line/column for text formats, JSON path for JSON), `value` the
 * offending text or value when there is one. The message names the place first:
 * `line 12, column 4 (field OBS_VALUE): 'abc' is not a number`.
 */
export class IngestError extends Error {
  readonly code: IngestErrorCode;
  readonly source: string;
  readonly location: SourceLocation;
  readonly value?: unknown;
  /** The problem without the place, e.g. "'abc' is not a number". */
  readonly detail: string;

  constructor(code: IngestErrorCode, source: string, location: SourceLocation, detail: string, value?: unknown) {
    const place = describeLocation(location);
    super(place ? `${place}: ${detail}` : detail);
    this.name = "IngestError";
    this.code = code;
    this.source = source;
    this.location = location;
    this.detail = detail;
    if (value !== undefined) this.value = value;
  }

  /** Plain data for logs, JSON answers and the malformed-corpus manifest checks. */
  toJSON(): { code: IngestErrorCode; source: string; location: SourceLocation; message: string; value?: unknown } {
    const out: { code: IngestErrorCode; source: string; location: SourceLocation; message: string; value?: unknown } = {
      code: this.code,
      source: this.source,
      location: this.location,
      message: this.message,
    };
    if (this.value !== undefined) out.value = this.value;
    return out;
  }
}

/** Type guard for IngestError (e.g. in a route handler's catch). */
export function isIngestError(e: unknown): e is IngestError {
  return e instanceof IngestError;
}

/** How a parser treats problems: throw the first one, or collect them all. */
export type IssueMode = "strict" | "collect";

/**
 * Receives every problem of one parse. In strict mode `report` throws; in collect mode it keeps
 * the first `maxIssues` problems and counts all of them.
 */
export class IssueCollector {
  readonly mode: IssueMode;
  readonly maxIssues: number;
  readonly issues: IngestError[] = [];
  /** All problems reported, including those beyond maxIssues. */
  count = 0;

  constructor(mode: IssueMode, maxIssues = 1000) {
    this.mode = mode;
    this.maxIssues = maxIssues;
  }

  /** Strict: throws `error`. Collect: records it and returns. */
  report(error: IngestError): void {
    if (this.mode === "strict") throw error;
    this.count++;
    if (this.issues.length < this.maxIssues) this.issues.push(error);
  }

  /**
   * Report a problem after which the payload cannot be read any further (syntax, encoding).
   * Strict: throws. Collect: records it; the caller stops reading.
   */
  fatal(error: IngestError): void {
    this.report(error);
  }
}

// ---------------------------------------------------------------------------------------------
// JSON paths

const IDENTIFIER = /^[A-Za-z_$][A-Za-z0-9_$]*$/;

/**
 * Build a JSON path from segments: numbers become `[3]`, identifiers `.name`, anything else
 * `["0:1"]`. Example: jsonPath(["dataSets", 0, "series", "0:1"]) === '$.dataSets[0].series["0:1"]'.
 */
export function jsonPath(segments: readonly (string | number)[]): string {
  let out = "$";
  for (const s of segments) {
    if (typeof s === "number") out += `[${s}]`;
    else if (IDENTIFIER.test(s)) out += `.${s}`;
    else out += `[${JSON.stringify(s)}]`;
  }
  return out;
}
