/**
 * HTTP GET with a policy: per-attempt timeout, retries with exponential backoff and full jitter,
 * Retry-After honoured (and capped), a byte limit on the body, conditional requests (ETag,
 * Last-Modified, 304) and a descriptive User-Agent. Returns raw bytes; parsing happens elsewhere.
 *
 * Every failure is a FetchError with a code from FETCH_ERROR_CODES, a one-sentence message naming
 * the URL (secret query values replaced by "***") and the number of attempts made.
 *
 * References:
 * - RFC 9110 (HTTP Semantics): 10.2.3 Retry-After (delay-seconds or HTTP-date), 8.8.2 Last-Modified,
 *   8.8.3 ETag, 13.1.2 If-None-Match, 13.1.3 If-Modified-Since (ignored when If-None-Match is sent),
 *   15.4.5 304 Not Modified, 8.6 Content-Length, 10.1.5 User-Agent.
 * - RFC 6585, section 4: 429 Too Many Requests may carry Retry-After.
 * - Backoff: M. Brooker, "Exponential Backoff And Jitter", AWS Architecture Blog, 2015 ("full jitter":
 *   sleep = random_between(0, min(cap, base * 2^attempt))).
 */
import pkg from "@/package.json" with { type: "json" };

export const FETCH_ERROR_CODES = ["TIMEOUT", "HTTP_STATUS", "TOO_LARGE", "NETWORK", "TRUNCATED", "ABORTED"] as const;
export type FetchErrorCode = (typeof FETCH_ERROR_CODES)[number];

/** Statuses retried by default: 408, 429 and the transient 5xx (RFC 9110 15.5.9, 15.6; RFC 6585 4). */
export const DEFAULT_RETRY_STATUSES: readonly number[] = [408, 429, 500, 502, 503, 504];

/** Query parameter names whose values never appear in messages (matched case-insensitively). */
const SECRET_PARAM_PATTERN = /key|token|secret|password|passwd|signature|sig$|auth|credential/i;

export interface BackoffPolicy {
  /** First retry waits up to baseMs; each further retry doubles the ceiling. */
  readonly baseMs: number;
  /** Ceiling of a single wait. */
  readonly maxMs: number;
  /** "full": wait a uniform random time in [0, ceiling); "none": wait the ceiling. */
  readonly jitter: "full" | "none";
}

export interface FetchOptions {
  /** Limit for one attempt, from sending the request to the last body byte. Default 30 000. */
  readonly timeoutMs?: number;
  /** Further attempts after the first. Default 3. */
  readonly retries?: number;
  readonly backoff?: Partial<BackoffPolicy>;
  /** HTTP statuses that are retried (network failures, timeouts and truncated bodies always are). */
  readonly retryOn?: readonly number[];
  /** Wait as long as a Retry-After header asks (capped by maxRetryAfterMs). Default true. */
  readonly respectRetryAfter?: boolean;
  /** Cap on a Retry-After wait. Default 120 000. */
  readonly maxRetryAfterMs?: number;
  /** Largest body accepted, in bytes (after content decoding). Default 50 MiB. */
  readonly maxBytes?: number;
  /** Validators of the copy already held: sent as If-None-Match / If-Modified-Since. */
  readonly etag?: string | null;
  readonly lastModified?: string | null;
  /** Default: defaultUserAgent(). */
  readonly userAgent?: string;
  readonly headers?: Readonly<Record<string, string>>;
  /** Extra query parameter names to hide in messages (e.g. a source's API key parameter). */
  readonly redactParams?: readonly string[];
  /** Cancels the request and any wait between attempts (code ABORTED). */
  readonly signal?: AbortSignal;
  /** Injectable for tests: the wait between attempts. */
  readonly sleep?: (ms: number, signal?: AbortSignal) => Promise<void>;
  /** Injectable for tests: uniform random number in [0, 1) for the jitter. */
  readonly random?: () => number;
  /** Injectable for tests: the clock (ms since epoch) against which a Retry-After date is read. */
  readonly now?: () => number;
  /** Injectable: the fetch implementation. Default: the global fetch of Node (undici). */
  readonly fetchImpl?: typeof fetch;
}

export interface FetchResult {
  readonly status: number;
  /** Response headers, names in lower case. */
  readonly headers: Readonly<Record<string, string>>;
  /** The body; empty when notModified. */
  readonly body: Uint8Array;
  readonly contentType: string | null;
  /** Validators of this response (on 304, those sent when the server repeats none). */
  readonly etag: string | null;
  readonly lastModified: string | null;
  /** True when the server answered 304 Not Modified to a conditional request. */
  readonly notModified: boolean;
  /** Attempts made, 1 when the first one succeeded. */
  readonly attempts: number;
  /** Final URL after redirects. */
  readonly url: string;
}

export class FetchError extends Error {
  readonly code: FetchErrorCode;
  /** The URL with secret query values replaced by "***". */
  readonly url: string;
  readonly attempts: number;
  /** HTTP status of the last response, when there was one. */
  readonly status?: number;
  /** The last Retry-After asked for, in ms, when the server sent one. */
  readonly retryAfterMs?: number;
  /** Start of the last error body (at most 300 characters), for diagnosis. */
  readonly bodyExcerpt?: string;

  constructor(
    fields: {
      code: FetchErrorCode;
      url: string;
      attempts: number;
      status?: number;
      retryAfterMs?: number;
      bodyExcerpt?: string;
    },
    message: string,
    options?: { cause?: unknown },
  ) {
    super(message, options);
    this.name = "FetchError";
    this.code = fields.code;
    this.url = fields.url;
    this.attempts = fields.attempts;
    this.status = fields.status;
    this.retryAfterMs = fields.retryAfterMs;
    this.bodyExcerpt = fields.bodyExcerpt;
  }
}

export function isFetchError(e: unknown): e is FetchError {
  return e instanceof FetchError;
}

/**
 * The User-Agent sent by default: "Ideafront/<version> (+<contact>)", the contact being whatever
 * the operator configures (a URL or a mailto: address), by default from IDEAFRONT_CONTACT.
 * RFC 9110 10.1.5 (product tokens, comment). Example: defaultUserAgent("mailto:ops@example.org")
 * gives "Ideafront/0.1.0 (+mailto:ops@example.org)".
 */
export function defaultUserAgent(contact: string | undefined = process.env.IDEAFRONT_CONTACT): string {
  const trimmed = contact?.trim();
  return trimmed ? `Ideafront/${pkg.version} (+${trimmed})` : `Ideafront/${pkg.version} (+contact not configured)`;
}

/**
 * Retry-After (RFC 9110 10.2.3) as a wait in milliseconds: delay-seconds or an HTTP-date read
 * against nowMs. Returns null for a missing or unreadable value; a date in the past gives 0.
 * Example: parseRetryAfter("120", 0) gives 120000.
 */
export function parseRetryAfter(value: string | null | undefined, nowMs: number): number | null {
  if (value == null) return null;
  const text = value.trim();
  if (/^\d+$/.test(text)) return Number(text) * 1000;
  // An HTTP-date always names a weekday and the GMT zone (IMF-fixdate and the two obsolete forms).
  if (!/^[A-Za-z]{3}/.test(text)) return null;
  const at = Date.parse(text);
  if (Number.isNaN(at)) return null;
  return Math.max(0, at - nowMs);
}

/**
 * Wait before retry number `retry` (1 for the first retry): exponential backoff with full jitter,
 * random() * min(maxMs, baseMs * 2^(retry - 1)), rounded down; without jitter, the ceiling itself.
 * Reference: Brooker, "Exponential Backoff And Jitter", AWS Architecture Blog, 2015.
 * Example: backoffDelay(3, { baseMs: 100, maxMs: 10000, jitter: "full" }, () => 0.5) gives 200.
 */
export function backoffDelay(retry: number, backoff: BackoffPolicy, random: () => number = Math.random): number {
  if (!Number.isInteger(retry) || retry < 1) throw new RangeError(`retry must be an integer >= 1, got ${retry}`);
  const ceiling = Math.min(backoff.maxMs, backoff.baseMs * 2 ** (retry - 1));
  return backoff.jitter === "full" ? Math.floor(random() * ceiling) : ceiling;
}

/**
 * The URL as it may appear in messages and logs: user information dropped, values of query
 * parameters that look secret (key, token, secret, password, signature, auth) or are named in
 * `extra` replaced by "***".
 */
export function redactUrl(url: string, extra: readonly string[] = []): string {
  let parsed: URL;
  try {
    parsed = new URL(url);
  } catch {
    return url.replace(/\?.*$/, "?…");
  }
  parsed.username = "";
  parsed.password = "";
  const hidden = new Set(extra.map((n) => n.toLowerCase()));
  const parts: string[] = [];
  for (const [name, value] of parsed.searchParams) {
    const secret = SECRET_PARAM_PATTERN.test(name) || hidden.has(name.toLowerCase());
    parts.push(`${encodeURIComponent(name)}=${secret ? "***" : encodeURIComponent(value)}`);
  }
  return `${parsed.origin}${parsed.pathname}${parts.length ? `?${parts.join("&")}` : ""}`;
}

interface ResolvedPolicy {
  timeoutMs: number;
  retries: number;
  backoff: BackoffPolicy;
  retryOn: ReadonlySet<number>;
  respectRetryAfter: boolean;
  maxRetryAfterMs: number;
  maxBytes: number;
  sleep: (ms: number, signal?: AbortSignal) => Promise<void>;
  random: () => number;
  now: () => number;
  fetchImpl: typeof fetch;
}

function requireNumber(name: string, value: number, min: number, integer: boolean): number {
  if (!Number.isFinite(value) || value < min || (integer && !Number.isInteger(value))) {
    throw new RangeError(`${name} must be ${integer ? "an integer" : "a number"} >= ${min}, got ${value}`);
  }
  return value;
}

function resolvePolicy(o: FetchOptions): ResolvedPolicy {
  const backoff: BackoffPolicy = {
    baseMs: requireNumber("backoff.baseMs", o.backoff?.baseMs ?? 1000, 0, false),
    maxMs: requireNumber("backoff.maxMs", o.backoff?.maxMs ?? 30_000, 0, false),
    jitter: o.backoff?.jitter ?? "full",
  };
  return {
    timeoutMs: requireNumber("timeoutMs", o.timeoutMs ?? 30_000, 1, false),
    retries: requireNumber("retries", o.retries ?? 3, 0, true),
    backoff,
    retryOn: new Set(o.retryOn ?? DEFAULT_RETRY_STATUSES),
    respectRetryAfter: o.respectRetryAfter ?? true,
    maxRetryAfterMs: requireNumber("maxRetryAfterMs", o.maxRetryAfterMs ?? 120_000, 0, false),
    maxBytes: requireNumber("maxBytes", o.maxBytes ?? 50 * 1024 * 1024, 0, true),
    sleep: o.sleep ?? abortableSleep,
    random: o.random ?? Math.random,
    now: o.now ?? Date.now,
    fetchImpl: o.fetchImpl ?? fetch,
  };
}

function abortableSleep(ms: number, signal?: AbortSignal): Promise<void> {
  return new Promise((resolve, reject) => {
    if (signal?.aborted) return reject(signal.reason);
    const onAbort = () => {
      clearTimeout(timer);
      reject(signal?.reason);
    };
    const timer = setTimeout(() => {
      signal?.removeEventListener("abort", onAbort);
      resolve();
    }, ms);
    signal?.addEventListener("abort", onAbort, { once: true });
  });
}

/** One failed attempt, before it becomes a FetchError. */
interface Failure {
  code: FetchErrorCode;
  retryable: boolean;
  /** What happened, as the end of a sentence that starts with the URL. */
  what: string;
  status?: number;
  retryAfterMs?: number;
  bodyExcerpt?: string;
  cause?: unknown;
}

type AttemptOutcome = { ok: true; result: Omit<FetchResult, "attempts"> } | { ok: false; failure: Failure };

/**
 * GET `url` under a policy (see FetchOptions for every setting and default).
 * Throws FetchError (codes TIMEOUT, HTTP_STATUS, TOO_LARGE, NETWORK, TRUNCATED, ABORTED) when no
 * attempt succeeds; throws at once on a misuse: RangeError (negative retries, zero timeout),
 * TypeError (not an absolute URL).
 * Example: `await fetchWithPolicy(url, { etag: '"r1"' })` gives `{ status: 304, notModified: true, ... }`
 * when the server still holds the representation tagged "r1".
 */
export async function fetchWithPolicy(url: string, options: FetchOptions = {}): Promise<FetchResult> {
  const policy = resolvePolicy(options);
  const safeUrl = redactUrl(url, options.redactParams);
  if (!URL.canParse(url)) throw new TypeError(`Not an absolute URL: ${safeUrl}`);
  const headers = requestHeaders(options);
  const signal = options.signal;

  for (let attempt = 1; ; attempt++) {
    const outcome = signal?.aborted ? aborted() : await attemptOnce(url, headers, policy, signal);
    if (outcome.ok) return { ...outcome.result, attempts: attempt };

    const failure = outcome.failure;
    if (!failure.retryable || attempt > policy.retries) throw toFetchError(failure, safeUrl, attempt);

    const wait =
      policy.respectRetryAfter && failure.retryAfterMs !== undefined
        ? Math.min(failure.retryAfterMs, policy.maxRetryAfterMs)
        : backoffDelay(attempt, policy.backoff, policy.random);
    try {
      await policy.sleep(wait, signal);
    } catch (cause) {
      if (signal?.aborted) throw toFetchError({ ...aborted().failure, cause }, safeUrl, attempt);
      throw cause;
    }
  }
}

function aborted(): { ok: false; failure: Failure } {
  return { ok: false, failure: { code: "ABORTED", retryable: false, what: "was cancelled by the caller" } };
}

function toFetchError(f: Failure, safeUrl: string, attempts: number): FetchError {
  const tries = `${attempts} attempt${attempts === 1 ? "" : "s"}`;
  return new FetchError(
    { code: f.code, url: safeUrl, attempts, status: f.status, retryAfterMs: f.retryAfterMs, bodyExcerpt: f.bodyExcerpt },
    `GET ${safeUrl} ${f.what} (${tries}).`,
    { cause: f.cause },
  );
}

function requestHeaders(o: FetchOptions): Headers {
  const h = new Headers(o.headers ?? {});
  if (!h.has("user-agent")) h.set("user-agent", o.userAgent ?? defaultUserAgent());
  if (o.etag) h.set("if-none-match", o.etag);
  if (o.lastModified) h.set("if-modified-since", o.lastModified);
  return h;
}

async function attemptOnce(
  url: string,
  headers: Headers,
  policy: ResolvedPolicy,
  callerSignal: AbortSignal | undefined,
): Promise<AttemptOutcome> {
  const timeout = new AbortController();
  const timer = setTimeout(() => timeout.abort(new Error("timeout")), policy.timeoutMs);
  const signal = callerSignal ? AbortSignal.any([callerSignal, timeout.signal]) : timeout.signal;
  const interrupted = (): Failure | null =>
    callerSignal?.aborted
      ? aborted().failure
      : timeout.signal.aborted
        ? { code: "TIMEOUT", retryable: true, what: `gave no complete response within ${policy.timeoutMs} ms` }
        : null;

  try {
    let res: Response;
    try {
      res = await policy.fetchImpl(url, { method: "GET", headers, signal, redirect: "follow" });
    } catch (cause) {
      const f = interrupted();
      if (f) return { ok: false, failure: { ...f, cause } };
      return {
        ok: false,
        failure: { code: "NETWORK", retryable: true, what: `could not be reached (${describeCause(cause)})`, cause },
      };
    }

    const resultBase = {
      status: res.status,
      headers: Object.fromEntries(res.headers),
      contentType: res.headers.get("content-type"),
      url: res.url || url,
    };

    if (res.status === 304) {
      await res.body?.cancel().catch(() => undefined);
      return {
        ok: true,
        result: {
          ...resultBase,
          body: new Uint8Array(0),
          etag: res.headers.get("etag") ?? headers.get("if-none-match"),
          lastModified: res.headers.get("last-modified") ?? headers.get("if-modified-since"),
          notModified: true,
        },
      };
    }

    if (res.status < 200 || res.status > 299) {
      const bodyExcerpt = await readExcerpt(res);
      const retryAfterMs = parseRetryAfter(res.headers.get("retry-after"), policy.now()) ?? undefined;
      const statusText = res.statusText ? ` ${res.statusText}` : "";
      return {
        ok: false,
        failure: {
          code: "HTTP_STATUS",
          retryable: policy.retryOn.has(res.status),
          what: `answered HTTP ${res.status}${statusText}`,
          status: res.status,
          retryAfterMs,
          bodyExcerpt,
        },
      };
    }

    const read = await readLimited(res, policy.maxBytes, interrupted);
    if (!read.ok) return read;
    return {
      ok: true,
      result: {
        ...resultBase,
        body: read.body,
        etag: res.headers.get("etag"),
        lastModified: res.headers.get("last-modified"),
        notModified: false,
      },
    };
  } finally {
    clearTimeout(timer);
  }
}

function describeCause(cause: unknown): string {
  const inner = cause instanceof Error && cause.cause instanceof Error ? cause.cause : cause;
  if (inner instanceof Error) {
    const code = (inner as { code?: unknown }).code;
    return typeof code === "string" ? `${code}: ${inner.message}` : inner.message;
  }
  return String(inner);
}

async function readExcerpt(res: Response): Promise<string | undefined> {
  if (!res.body) return undefined;
  const reader = res.body.getReader();
  try {
    const { value } = await reader.read();
    return value ? new TextDecoder().decode(value.subarray(0, 300)) : undefined;
  } catch {
    return undefined;
  } finally {
    await reader.cancel().catch(() => undefined);
  }
}

/** Reads the body, refusing more than maxBytes and checking the length against Content-Length. */
async function readLimited(
  res: Response,
  maxBytes: number,
  interrupted: () => Failure | null,
): Promise<{ ok: true; body: Uint8Array } | { ok: false; failure: Failure }> {
  const announcedHeader = res.headers.get("content-length");
  const announced = announcedHeader !== null && /^\d+$/.test(announcedHeader.trim()) ? Number(announcedHeader) : null;
  // With a content coding (gzip, br) Content-Length counts encoded bytes, not the decoded body.
  const encoding = res.headers.get("content-encoding");
  const comparable = announced !== null && (!encoding || encoding.trim().toLowerCase() === "identity");

  if (announced !== null && announced > maxBytes) {
    await res.body?.cancel().catch(() => undefined);
    return {
      ok: false,
      failure: {
        code: "TOO_LARGE",
        retryable: false,
        what: `announced a body of ${announced} bytes (Content-Length), over the limit of ${maxBytes} bytes`,
      },
    };
  }
  if (!res.body) return { ok: true, body: new Uint8Array(0) };

  const reader = res.body.getReader();
  const chunks: Uint8Array[] = [];
  let received = 0;
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      received += value.byteLength;
      if (received > maxBytes) {
        await reader.cancel().catch(() => undefined);
        return {
          ok: false,
          failure: { code: "TOO_LARGE", retryable: false, what: `sent a body over the limit of ${maxBytes} bytes` },
        };
      }
      chunks.push(value);
    }
  } catch (cause) {
    const f = interrupted();
    if (f) return { ok: false, failure: { ...f, cause } };
    if (comparable && received < (announced as number)) {
      return { ok: false, failure: truncated(received, announced as number, cause) };
    }
    return {
      ok: false,
      failure: {
        code: "NETWORK",
        retryable: true,
        what: `failed while sending the body after ${received} bytes (${describeCause(cause)})`,
        cause,
      },
    };
  }
  if (comparable && received !== announced) return { ok: false, failure: truncated(received, announced as number) };

  const body = new Uint8Array(received);
  let offset = 0;
  for (const c of chunks) {
    body.set(c, offset);
    offset += c.byteLength;
  }
  return { ok: true, body };
}

function truncated(received: number, announced: number, cause?: unknown): Failure {
  return {
    code: "TRUNCATED",
    retryable: true,
    what: `sent ${received} of the ${announced} bytes announced by Content-Length`,
    cause,
  };
}
