/**
 * One entry point for every payload format: parsePayload(format, input, options).
 *
 *   "sdmx-json"      SDMX-JSON data message 1.0 / 2.x        (sdmx-json.ts)
 *   "sdmx-csv"       SDMX-CSV data message 1.0 / 2.x         (sdmx-csv.ts)
 *   "jsonstat"       JSON-stat 2.0 dataset or collection     (jsonstat.ts)
 *   "worldbank-json" World Bank indicators API v2 JSON page  (worldbank.ts)
 *   "csv"            plain CSV/TSV with a column mapping     (tabular.ts)
 *
 * Options are validated (zod) before the first byte is read; an unknown format or option throws
 * IngestError OPTIONS_INVALID. Strict mode (default) throws the first IngestError; collect mode
 * returns { observations, issues, counts, meta } with every problem.
 */
import {
  PAYLOAD_FORMATS,
  type ObservationSink,
  type ParsedObservation,
  type ParseResult,
  type ParseSummary,
  type PayloadFormat,
  type PayloadInput,
  type StreamControl,
} from "./common";
import { IngestError } from "./errors";
import { parseJsonStatStream, type JsonStatOptions } from "./jsonstat";
import { parseSdmxCsvStream, type SdmxCsvOptions } from "./sdmx-csv";
import { parseSdmxJsonStream, type SdmxJsonOptions } from "./sdmx-json";
import { parseTabularStream, type TabularOptions } from "./tabular";
import { parseWorldBankStream, type WorldBankOptions } from "./worldbank";

export { PAYLOAD_FORMATS };
export type { ParsedObservation, ParseResult, ParseSummary, PayloadFormat, PayloadInput };

/** Options of each format. */
export interface PayloadOptionsByFormat {
  "sdmx-json": SdmxJsonOptions;
  "sdmx-csv": SdmxCsvOptions;
  jsonstat: JsonStatOptions;
  "worldbank-json": WorldBankOptions;
  csv: TabularOptions;
}

function checkFormat(format: string): asserts format is PayloadFormat {
  if (!(PAYLOAD_FORMATS as readonly string[]).includes(format)) {
    throw new IngestError("OPTIONS_INVALID", "parse", { field: "format" }, `unknown format '${format}' (one of ${PAYLOAD_FORMATS.join(", ")})`, format);
  }
}

/**
 * Parse a payload as a stream, handing each observation to `onObservation`; returns issues,
 * counts and meta. Use this for large payloads (memory stays flat).
 */
export async function parsePayloadStream<F extends PayloadFormat>(
  format: F,
  input: PayloadInput,
  options: PayloadOptionsByFormat[F] | Record<string, unknown> | undefined,
  onObservation: ObservationSink,
  control: StreamControl = {},
): Promise<ParseSummary> {
  checkFormat(format);
  const f: PayloadFormat = format;
  switch (f) {
    case "sdmx-json":
      return parseSdmxJsonStream(input, options as SdmxJsonOptions | undefined, onObservation, control);
    case "sdmx-csv":
      return parseSdmxCsvStream(input, options as SdmxCsvOptions | undefined, onObservation, control);
    case "jsonstat":
      return parseJsonStatStream(input, options as JsonStatOptions | undefined, onObservation, control);
    case "worldbank-json":
      return parseWorldBankStream(input, options as WorldBankOptions | undefined, onObservation, control);
    case "csv":
      return parseTabularStream(input, (options ?? {}) as TabularOptions, onObservation, control);
  }
}

/**
 * Parse a whole payload.
 *
 * Example: await parsePayload("csv", text, { map: "economy=Country Code,period=Year,value=Value" })
 * -> { observations: [{ dimensions: { "Country Code": "AGO" }, period: "2011", value: 48.42677, attributes: {} }, ...],
 *      issues: [], counts: { observations: 2375, skipped: 0, issues: 0 }, meta: {...} }
 *
 * Throws IngestError: OPTIONS_INVALID always; any other code in strict mode.
 */
export async function parsePayload<F extends PayloadFormat>(
  format: F,
  input: PayloadInput,
  options?: PayloadOptionsByFormat[F] | Record<string, unknown>,
): Promise<ParseResult> {
  const observations: ParsedObservation[] = [];
  const summary = await parsePayloadStream(format, input, options, (o) => observations.push(o));
  return { observations, ...summary };
}

/**
 * Read a payload as an async iterator of observations; the parser pauses while more than
 * `highWaterMark` observations wait to be consumed. The generator's return value is the summary.
 *
 * Example: for await (const o of iterateObservations("sdmx-csv", createReadStream(path), {})) ...
 */
export async function* iterateObservations<F extends PayloadFormat>(
  format: F,
  input: PayloadInput,
  options?: PayloadOptionsByFormat[F] | Record<string, unknown>,
  highWaterMark = 10_000,
): AsyncGenerator<ParsedObservation, ParseSummary, undefined> {
  let queue: ParsedObservation[] = [];
  let done = false;
  let failure: { error: unknown } | null = null;
  let summary: ParseSummary | undefined;
  let wakeConsumer: (() => void) | null = null;
  let wakeProducer: (() => void) | null = null;
  const wake = (): void => {
    const w = wakeConsumer;
    wakeConsumer = null;
    w?.();
  };
  const run = parsePayloadStream(
    format,
    input,
    options,
    (o) => {
      queue.push(o);
    },
    {
      afterChunk: () => {
        if (queue.length === 0) return;
        wake();
        if (queue.length < highWaterMark) return;
        return new Promise<void>((resolve) => {
          wakeProducer = resolve;
        });
      },
    },
  ).then(
    (s) => {
      summary = s;
    },
    (error: unknown) => {
      failure = { error };
    },
  );
  void run.finally(() => {
    done = true;
    wake();
  });
  try {
    for (;;) {
      if (queue.length) {
        const batch = queue;
        queue = [];
        const p = wakeProducer as (() => void) | null;
        wakeProducer = null;
        p?.();
        for (const o of batch) yield o;
        continue;
      }
      if (done) break;
      await new Promise<void>((resolve) => {
        wakeConsumer = resolve;
      });
    }
  } finally {
    const p = wakeProducer as (() => void) | null;
    wakeProducer = null;
    p?.();
  }
  await run;
  if (failure) throw (failure as { error: unknown }).error;
  return summary!;
}
