/**
 * Connectors: fetch one release of a source (every query, every page) as raw payloads with their
 * metadata. Nothing here parses observations; the parsers take the bytes.
 *
 * - SDMX 2.1 REST: the format is chosen by content negotiation, Accept
 *   application/vnd.sdmx.data+json;version=1.0.0 or application/vnd.sdmx.data+csv;version=1.0.0
 *   (SDMX 2.1 Technical Notes, section 10 "SDMX RESTful web services", media types).
 * - World Bank indicators API v2: page 1 first; its header { page, pages, per_page, total } says how
 *   many pages follow (per_page may arrive as a string). Pages 2..pages are fetched in order and
 *   every header must repeat page 1's pages, per_page and total, and the rows must add up to total;
 *   otherwise the release changed while it was read and the fetch fails (PAGING_INCONSISTENT), so
 *   a release is never stitched from two publications.
 * - Conditional requests: validators of the previous fetch, keyed by URL, are sent as
 *   If-None-Match / If-Modified-Since (RFC 9110 13.1.2-13.1.3). For a paged query only page 1 is
 *   asked conditionally: every World Bank page repeats `lastupdated`, so a new release changes page
 *   1, and when page 1 changed all pages are needed in full.
 * - API keys are read from the environment variable the definition names, sent in its header or
 *   query parameter, and never recorded: payload URLs and validators are keyed without the key.
 */
import { readFile, stat } from "node:fs/promises";
import { fileURLToPath } from "node:url";
import { FetchError, fetchWithPolicy, type FetchOptions, type FetchResult } from "@/lib/ingestion/http";
import { buildRequestUrls, type SourceDefinition, type SourceFormat, type SourceQuery } from "@/lib/ingestion/sources";

/** SDMX 2.1 REST media types for data messages, and what the other formats ask for. */
export const ACCEPT_BY_FORMAT: Readonly<Record<SourceFormat, string>> = {
  "sdmx-json": "application/vnd.sdmx.data+json;version=1.0.0",
  "sdmx-csv": "application/vnd.sdmx.data+csv;version=1.0.0",
  jsonstat: "application/json",
  "worldbank-json": "application/json",
  csv: "text/csv",
};

export const CONNECTOR_ERROR_CODES = [
  "MISSING_API_KEY",
  "NOT_FETCHABLE",
  "PAYLOAD_INVALID",
  "API_MESSAGE",
  "PAGING_INCONSISTENT",
  "PAGING_LIMIT",
] as const;
export type ConnectorErrorCode = (typeof CONNECTOR_ERROR_CODES)[number];

export class ConnectorError extends Error {
  readonly code: ConnectorErrorCode;
  readonly source: string;
  /** URL concerned (never with an API key), when there is one. */
  readonly url?: string;
  constructor(code: ConnectorErrorCode, source: string, message: string, url?: string) {
    super(message);
    this.name = "ConnectorError";
    this.code = code;
    this.source = source;
    this.url = url;
  }
}

/** Validators of a representation already held. */
export interface Validators {
  readonly etag?: string | null;
  readonly lastModified?: string | null;
}

export type Fetcher = (url: string, options: FetchOptions) => Promise<FetchResult>;

export interface FetchReleaseOptions {
  /** Default: fetchWithPolicy. */
  readonly fetcher?: Fetcher;
  /** Validators of the previous fetch, keyed by payload URL (FetchedRelease.validators). */
  readonly previous?: Readonly<Record<string, Validators>>;
  /** Where API keys are read. Default: process.env. */
  readonly env?: Readonly<Record<string, string | undefined>>;
  /**
   * Policy settings passed to every request (sleep, random, now, userAgent, backoff, signal...).
   * The definition's timeoutMs, retries and maxBytes apply unless given here.
   */
  readonly policy?: Omit<FetchOptions, "etag" | "lastModified" | "headers" | "redactParams">;
}

export interface ReleasePayload {
  /** URL requested, without any API key. */
  readonly url: string;
  readonly queryId: string;
  readonly query: SourceQuery;
  /** Page number for paged queries, else null. */
  readonly page: number | null;
  readonly status: number;
  /** Raw bytes; empty when notModified. */
  readonly body: Uint8Array;
  readonly contentType: string | null;
  readonly etag: string | null;
  readonly lastModified: string | null;
  readonly notModified: boolean;
  readonly attempts: number;
}

export interface FetchedRelease {
  readonly source: string;
  readonly payloads: readonly ReleasePayload[];
  /** True when every request answered 304 (nothing new since the previous fetch). */
  readonly allNotModified: boolean;
  /** Validators to pass as `previous` next time, keyed by payload URL. */
  readonly validators: Readonly<Record<string, Validators>>;
}

/**
 * Fetch every payload of one release of `def`, in order, one request at a time.
 * Throws FetchError (from the fetcher) or ConnectorError (MISSING_API_KEY before any request,
 * NOT_FETCHABLE for demo sources, PAYLOAD_INVALID / API_MESSAGE / PAGING_INCONSISTENT /
 * PAGING_LIMIT while paging). Example: a World Bank definition over 3 pages gives 3 payloads
 * with page 1, 2, 3.
 */
export async function fetchRelease(def: SourceDefinition, options: FetchReleaseOptions = {}): Promise<FetchedRelease> {
  if (def.kind === "demo") {
    throw new ConnectorError("NOT_FETCHABLE", def.name, `Source ${def.name} is a demo source: its invented data is generated, not fetched.`);
  }
  const env = options.env ?? process.env;
  let apiKey: string | undefined;
  if (def.apiKeyEnv) {
    apiKey = env[def.apiKeyEnv];
    if (!apiKey) {
      throw new ConnectorError(
        "MISSING_API_KEY",
        def.name,
        `Source ${def.name} needs an API key in the environment variable ${def.apiKeyEnv}, which is not set.`,
      );
    }
  }

  const fetcher = options.fetcher ?? fetchWithPolicy;
  const get = async (url: string, validators: Validators | undefined): Promise<FetchResult> => {
    const headers: Record<string, string> = { accept: ACCEPT_BY_FORMAT[def.format] };
    let target = url;
    if (apiKey && def.apiKeyHeader) headers[def.apiKeyHeader] = apiKey;
    if (apiKey && def.apiKeyParam) {
      const u = new URL(url);
      u.searchParams.append(def.apiKeyParam, apiKey);
      target = u.href;
    }
    return fetcher(target, {
      timeoutMs: def.timeoutMs,
      retries: def.retries,
      maxBytes: def.maxBytes,
      ...options.policy,
      headers,
      etag: validators?.etag ?? null,
      lastModified: validators?.lastModified ?? null,
      redactParams: def.apiKeyParam ? [def.apiKeyParam] : [],
    });
  };

  const payloads: ReleasePayload[] = [];
  for (const request of buildRequestUrls(def, { page: 1 })) {
    const previous = options.previous?.[request.url];
    if (request.url.startsWith("file:")) {
      payloads.push(await readLocalFile(def, request.url, request.query, previous));
    } else if (def.kind === "worldbank") {
      payloads.push(...(await fetchWorldBankPages(def, request.queryIndex, request.url, previous, get)));
    } else {
      payloads.push(toPayload(request.url, request.query, request.page, await get(request.url, previous)));
    }
  }

  const validators: Record<string, Validators> = {};
  for (const p of payloads) if (p.etag || p.lastModified) validators[p.url] = { etag: p.etag, lastModified: p.lastModified };
  return {
    source: def.name,
    payloads,
    allNotModified: payloads.length > 0 && payloads.every((p) => p.notModified),
    validators,
  };
}

function toPayload(url: string, query: SourceQuery, page: number | null, r: FetchResult): ReleasePayload {
  return {
    url,
    queryId: query.id,
    query,
    page,
    status: r.status,
    body: r.body,
    contentType: r.contentType,
    etag: r.etag,
    lastModified: r.lastModified,
    notModified: r.notModified,
    attempts: r.attempts,
  };
}

/** Header of one World Bank page, with the number of rows the page holds. */
export interface WorldBankPageHeader {
  readonly page: number;
  readonly pages: number;
  readonly perPage: number;
  readonly total: number;
  readonly rows: number;
}

/**
 * Reads the header of a World Bank indicators API v2 page: [ {page, pages, per_page, total, ...}, rows ].
 * Numbers may arrive as strings ("50"). Throws ConnectorError API_MESSAGE for the API's error answer
 * [ { message: [ { id, key, value } ] } ] and PAYLOAD_INVALID for anything else it cannot read.
 */
export function readWorldBankPageHeader(body: Uint8Array, source: string, url: string): WorldBankPageHeader {
  const invalid = (why: string) =>
    new ConnectorError("PAYLOAD_INVALID", source, `World Bank page ${url} cannot be read: ${why}.`, url);
  let doc: unknown;
  try {
    doc = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(body));
  } catch (e) {
    throw invalid(`not JSON (${e instanceof Error ? e.message : String(e)})`);
  }
  if (!Array.isArray(doc) || doc.length === 0 || typeof doc[0] !== "object" || doc[0] === null) {
    throw invalid("expected an array whose first element is the paging header");
  }
  const head = doc[0] as Record<string, unknown>;
  if (Array.isArray(head.message)) {
    const text = head.message
      .map((m: unknown) => {
        const o = (m ?? {}) as Record<string, unknown>;
        return [o.id, o.key, o.value].filter((x) => x !== undefined).join(" ");
      })
      .join("; ");
    throw new ConnectorError("API_MESSAGE", source, `World Bank API answered ${url} with a message: ${text}.`, url);
  }
  const int = (field: string): number => {
    const v = head[field];
    const n = typeof v === "number" ? v : typeof v === "string" && /^\s*\d+\s*$/.test(v) ? Number(v) : NaN;
    if (!Number.isInteger(n) || n < 0) throw invalid(`header field ${field} is ${JSON.stringify(v)}, not a whole number`);
    return n;
  };
  const rowsField = doc[1];
  if (rowsField !== null && rowsField !== undefined && !Array.isArray(rowsField)) throw invalid("second element is not a list of rows");
  return {
    page: int("page"),
    pages: int("pages"),
    perPage: int("per_page"),
    total: int("total"),
    rows: Array.isArray(rowsField) ? rowsField.length : 0,
  };
}

async function fetchWorldBankPages(
  def: SourceDefinition,
  queryIndex: number,
  firstUrl: string,
  previous: Validators | undefined,
  get: (url: string, v: Validators | undefined) => Promise<FetchResult>,
): Promise<ReleasePayload[]> {
  const query = def.queries[queryIndex] as SourceQuery;
  const first = await get(firstUrl, previous);
  const out = [toPayload(firstUrl, query, 1, first)];
  if (first.notModified) return out;

  const head = readWorldBankPageHeader(first.body, def.name, firstUrl);
  const inconsistent = (url: string, why: string) =>
    new ConnectorError(
      "PAGING_INCONSISTENT",
      def.name,
      `World Bank paging of ${query.id} changed while it was read (${why}); the release was probably updated, fetch it again.`,
      url,
    );
  if (head.page !== 1) throw inconsistent(firstUrl, `page 1 says it is page ${head.page}`);
  if (head.pages > def.paging.maxPages) {
    throw new ConnectorError(
      "PAGING_LIMIT",
      def.name,
      `World Bank query ${query.id} announces ${head.pages} pages, more than paging.maxPages = ${def.paging.maxPages}.`,
      firstUrl,
    );
  }

  let rows = head.rows;
  for (let page = 2; page <= head.pages; page++) {
    const request = buildRequestUrls(def, { page })[queryIndex];
    if (!request) throw new RangeError(`query ${queryIndex} vanished from ${def.name}`);
    const r = await get(request.url, undefined);
    const h = readWorldBankPageHeader(r.body, def.name, request.url);
    if (h.page !== page) throw inconsistent(request.url, `page ${page} says it is page ${h.page}`);
    if (h.pages !== head.pages) throw inconsistent(request.url, `page 1 announced ${head.pages} pages, page ${page} announces ${h.pages}`);
    if (h.total !== head.total) throw inconsistent(request.url, `page 1 announced ${head.total} rows, page ${page} announces ${h.total}`);
    if (h.perPage !== head.perPage) throw inconsistent(request.url, `per_page went from ${head.perPage} to ${h.perPage}`);
    rows += h.rows;
    out.push(toPayload(request.url, query, page, r));
  }
  if (rows !== head.total) throw inconsistent(firstUrl, `the pages hold ${rows} rows, the header announced ${head.total}`);
  return out;
}

/** A file: URL (a local copy of a published file). Last-Modified is the file's modification time. */
async function readLocalFile(
  def: SourceDefinition,
  url: string,
  query: SourceQuery,
  previous: Validators | undefined,
): Promise<ReleasePayload> {
  const path = fileURLToPath(url);
  const info = await stat(path);
  const lastModified = info.mtime.toUTCString();
  const base = { url, queryId: query.id, query, page: null, contentType: null, etag: null, lastModified, attempts: 1 };
  if (previous?.lastModified === lastModified) {
    return { ...base, status: 304, body: new Uint8Array(0), notModified: true };
  }
  if (info.size > def.maxBytes) {
    throw new FetchError(
      { code: "TOO_LARGE", url, attempts: 1 },
      `Reading ${url} refused: the file has ${info.size} bytes, over the limit of ${def.maxBytes} bytes.`,
    );
  }
  return { ...base, status: 200, body: new Uint8Array(await readFile(path)), notModified: false };
}
