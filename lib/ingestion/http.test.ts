import { afterEach, beforeEach, describe, expect, it } from "vitest";
import {
  backoffDelay,
  defaultUserAgent,
  FetchError,
  fetchWithPolicy,
  parseRetryAfter,
  redactUrl,
  type FetchOptions,
} from "@/lib/ingestion/http";
import { startFakeAgency, type FakeAgency } from "@/test/fixtures/fake-agency";

/** An injected sleep that records each wait and returns at once. */
function recordingSleep() {
  const delays: number[] = [];
  const sleep = async (ms: number) => {
    delays.push(ms);
  };
  return { delays, sleep };
}

async function fetchError(p: Promise<unknown>): Promise<FetchError> {
  try {
    await p;
  } catch (e) {
    if (e instanceof FetchError) return e;
    throw e;
  }
  throw new Error("expected a FetchError, the fetch succeeded");
}

let agency: FakeAgency;
let wbUrl: string;
beforeEach(async () => {
  agency = await startFakeAgency();
  wbUrl = `${agency.urls.worldbank}/country/all/indicator/SP.POP.TOTL?format=json&per_page=50&page=1`;
});
afterEach(async () => {
  await agency.close();
});

describe("fetchWithPolicy: success", () => {
  it("returns status, bytes, validators and one attempt, and sends the configured User-Agent", async () => {
    const res = await fetchWithPolicy(wbUrl, { userAgent: defaultUserAgent("mailto:data-team@example.org") });
    expect(res.status).toBe(200);
    expect(res.attempts).toBe(1);
    expect(res.notModified).toBe(false);
    const doc = JSON.parse(new TextDecoder().decode(res.body)) as [{ total: number }, unknown[]];
    expect(doc[0].total).toBe(6);
    expect(res.etag).toMatch(/^"[A-Za-z0-9_-]+"$/);
    expect(res.lastModified).toBe("Thu, 15 Jan 2026 09:00:00 GMT");
    expect(res.contentType).toBe("application/json; charset=utf-8");
    expect(res.headers["content-length"]).toBe(String(res.body.byteLength));
    expect(agency.requests).toHaveLength(1);
    expect(agency.requests[0]?.headers["user-agent"]).toBe("Ideafront/0.1.0 (+mailto:data-team@example.org)");
  });

  it("sends the default User-Agent naming the product and version when none is given", async () => {
    await fetchWithPolicy(wbUrl);
    expect(agency.requests[0]?.headers["user-agent"]).toMatch(/^Ideafront\/0\.1\.0 \(\+.+\)$/);
  });

  it("sends extra headers as given", async () => {
    await fetchWithPolicy(wbUrl, { headers: { accept: "application/json", "x-team": "growth" } });
    expect(agency.requests[0]?.headers.accept).toBe("application/json");
    expect(agency.requests[0]?.headers["x-team"]).toBe("growth");
  });

  it("reads a body sent without Content-Length (chunked)", async () => {
    agency.inject({ kind: "chunked" });
    const res = await fetchWithPolicy(wbUrl);
    expect(res.headers["content-length"]).toBeUndefined();
    expect(res.headers["transfer-encoding"]).toBe("chunked");
    expect(JSON.parse(new TextDecoder().decode(res.body))[0].total).toBe(6);
  });
});

describe("fetchWithPolicy: retries", () => {
  it("retries 500 twice, waiting full-jitter exponential backoff, then succeeds", async () => {
    agency.inject({ kind: "status", status: 500 }, { times: 2 });
    const { delays, sleep } = recordingSleep();
    const res = await fetchWithPolicy(wbUrl, {
      retries: 3,
      backoff: { baseMs: 100, maxMs: 10_000, jitter: "full" },
      random: () => 0.5,
      sleep,
    });
    expect(res.status).toBe(200);
    expect(res.attempts).toBe(3);
    // full jitter: random * min(max, base * 2^(retry-1)) = 0.5 * 100, 0.5 * 200
    expect(delays).toEqual([50, 100]);
    expect(agency.requests.map((r) => r.status)).toEqual([500, 500, 200]);
  });

  it("waits as long as Retry-After (seconds) on 503 instead of the backoff", async () => {
    agency.inject({ kind: "status", status: 503, retryAfter: 7 });
    const { delays, sleep } = recordingSleep();
    const res = await fetchWithPolicy(wbUrl, { sleep, random: () => 0.5, backoff: { baseMs: 100 } });
    expect(res.attempts).toBe(2);
    expect(delays).toEqual([7000]);
  });

  it("reads a Retry-After HTTP-date on 429 against the injected clock", async () => {
    agency.inject({ kind: "status", status: 429, retryAfter: "Wed, 21 Oct 2026 07:28:30 GMT" });
    const { delays, sleep } = recordingSleep();
    const res = await fetchWithPolicy(wbUrl, { sleep, now: () => Date.parse("2026-10-21T07:28:00Z") });
    expect(res.attempts).toBe(2);
    expect(delays).toEqual([30_000]);
  });

  it("caps a Retry-After longer than maxRetryAfterMs", async () => {
    agency.inject({ kind: "status", status: 503, retryAfter: 3600 });
    const { delays, sleep } = recordingSleep();
    await fetchWithPolicy(wbUrl, { sleep, maxRetryAfterMs: 60_000 });
    expect(delays).toEqual([60_000]);
  });

  it("uses the backoff when respectRetryAfter is false", async () => {
    agency.inject({ kind: "status", status: 429, retryAfter: 7 });
    const { delays, sleep } = recordingSleep();
    await fetchWithPolicy(wbUrl, { sleep, respectRetryAfter: false, backoff: { baseMs: 300, jitter: "none" } });
    expect(delays).toEqual([300]);
  });

  it("gives up after `retries` more attempts with HTTP_STATUS, the status and the attempt count", async () => {
    agency.inject({ kind: "status", status: 503, retryAfter: 1 }, { times: Infinity });
    const { delays, sleep } = recordingSleep();
    const err = await fetchError(fetchWithPolicy(wbUrl, { retries: 2, sleep }));
    expect(err.code).toBe("HTTP_STATUS");
    expect(err.status).toBe(503);
    expect(err.attempts).toBe(3);
    expect(err.retryAfterMs).toBe(1000);
    expect(err.bodyExcerpt).toBe("fake agency: injected status 503");
    expect(delays).toEqual([1000, 1000]);
    expect(agency.requests).toHaveLength(3);
    expect(err.message).toBe(`GET ${wbUrl} answered HTTP 503 Service Unavailable (3 attempts).`);
  });

  it("does not retry a status outside retryOn (404)", async () => {
    const { delays, sleep } = recordingSleep();
    const err = await fetchError(fetchWithPolicy(`${agency.baseUrl}/nowhere`, { sleep }));
    expect(err.code).toBe("HTTP_STATUS");
    expect(err.status).toBe(404);
    expect(err.attempts).toBe(1);
    expect(delays).toEqual([]);
    expect(agency.requests).toHaveLength(1);
  });

  it("honours a custom retryOn list", async () => {
    agency.inject({ kind: "status", status: 500 });
    const { sleep } = recordingSleep();
    const err = await fetchError(fetchWithPolicy(wbUrl, { sleep, retryOn: [503] }));
    expect(err.status).toBe(500);
    expect(err.attempts).toBe(1);
  });

  it("retries a connection closed without an answer, then reports NETWORK", async () => {
    agency.inject({ kind: "reset" }, { times: Infinity });
    const { delays, sleep } = recordingSleep();
    const err = await fetchError(fetchWithPolicy(wbUrl, { retries: 1, sleep, random: () => 0 }));
    expect(err.code).toBe("NETWORK");
    expect(err.attempts).toBe(2);
    expect(delays).toEqual([0]);
    expect(agency.requests).toHaveLength(2);
  });

  it("reports NETWORK for a port where nothing listens", async () => {
    const closed = await startFakeAgency();
    const url = `${closed.baseUrl}/files/x`;
    await closed.close();
    const err = await fetchError(fetchWithPolicy(url, { retries: 0 }));
    expect(err.code).toBe("NETWORK");
    expect(err.message).toContain("ECONNREFUSED");
  });
});

describe("fetchWithPolicy: limits", () => {
  it("stops waiting after timeoutMs with TIMEOUT", async () => {
    agency.inject({ kind: "delay", ms: 5000 });
    const err = await fetchError(fetchWithPolicy(wbUrl, { timeoutMs: 150, retries: 0 }));
    expect(err.code).toBe("TIMEOUT");
    expect(err.attempts).toBe(1);
    expect(err.message).toBe(`GET ${wbUrl} gave no complete response within 150 ms (1 attempt).`);
  });

  it("retries after a timeout and succeeds when the server answers in time", async () => {
    agency.inject({ kind: "delay", ms: 5000 });
    const { delays, sleep } = recordingSleep();
    const res = await fetchWithPolicy(wbUrl, { timeoutMs: 150, retries: 1, sleep });
    expect(res.attempts).toBe(2);
    expect(delays).toHaveLength(1);
  });

  it("refuses a body whose Content-Length announces more than maxBytes, without retrying", async () => {
    const { sleep } = recordingSleep();
    const err = await fetchError(fetchWithPolicy(wbUrl, { maxBytes: 100, sleep }));
    expect(err.code).toBe("TOO_LARGE");
    expect(err.attempts).toBe(1);
    expect(err.message).toMatch(/announced a body of \d+ bytes \(Content-Length\), over the limit of 100 bytes/);
    expect(agency.requests).toHaveLength(1);
  });

  it("stops reading a body without Content-Length once it passes maxBytes", async () => {
    agency.inject({ kind: "oversize", bytes: 2_000_000 });
    const err = await fetchError(fetchWithPolicy(wbUrl, { maxBytes: 10_000 }));
    expect(err.code).toBe("TOO_LARGE");
    expect(err.message).toContain("sent a body over the limit of 10000 bytes");
  });

  it("accepts a body of exactly maxBytes", async () => {
    const size = (await fetchWithPolicy(wbUrl)).body.byteLength;
    const res = await fetchWithPolicy(wbUrl, { maxBytes: size });
    expect(res.body.byteLength).toBe(size);
  });

  it("reports TRUNCATED when the connection closes before Content-Length bytes arrive", async () => {
    const full = (await fetchWithPolicy(wbUrl)).body.byteLength;
    agency.inject({ kind: "truncate", keepBytes: 40 });
    const err = await fetchError(fetchWithPolicy(wbUrl, { retries: 0 }));
    expect(err.code).toBe("TRUNCATED");
    expect(err.message).toContain(`sent 40 of the ${full} bytes announced by Content-Length`);
  });

  it("retries a truncated body", async () => {
    agency.inject({ kind: "truncate" });
    const { sleep } = recordingSleep();
    const res = await fetchWithPolicy(wbUrl, { retries: 1, sleep });
    expect(res.attempts).toBe(2);
    expect(JSON.parse(new TextDecoder().decode(res.body))[0].total).toBe(6);
  });
});

describe("fetchWithPolicy: conditional requests (RFC 9110 13.1)", () => {
  it("sends If-None-Match and returns notModified on 304, then the new body after a release", async () => {
    const first = await fetchWithPolicy(wbUrl);
    const second = await fetchWithPolicy(wbUrl, { etag: first.etag });
    expect(agency.requests[1]?.headers["if-none-match"]).toBe(first.etag);
    expect(second.status).toBe(304);
    expect(second.notModified).toBe(true);
    expect(second.body.byteLength).toBe(0);
    expect(second.etag).toBe(first.etag);

    agency.publish({
      observations: agency.release.observations.map((o) => (o.value === null ? o : { ...o, value: o.value + 1 })),
    });
    const third = await fetchWithPolicy(wbUrl, { etag: first.etag, lastModified: first.lastModified });
    expect(third.status).toBe(200);
    expect(third.notModified).toBe(false);
    expect(third.etag).not.toBe(first.etag);
    expect(third.lastModified).toBe("Fri, 16 Jan 2026 09:00:00 GMT");
  });

  it("sends If-Modified-Since when the server gives only Last-Modified", async () => {
    const lmOnly = await startFakeAgency({ validators: "last-modified" });
    try {
      const url = `${lmOnly.urls.worldbank}/country/all/indicator/SP.POP.TOTL?format=json`;
      const first = await fetchWithPolicy(url);
      expect(first.etag).toBeNull();
      const second = await fetchWithPolicy(url, { lastModified: first.lastModified });
      expect(lmOnly.requests[1]?.headers["if-modified-since"]).toBe("Thu, 15 Jan 2026 09:00:00 GMT");
      expect(second.notModified).toBe(true);
      lmOnly.publish({});
      const third = await fetchWithPolicy(url, { lastModified: first.lastModified });
      expect(third.notModified).toBe(false);
      expect(third.body.byteLength).toBeGreaterThan(0);
    } finally {
      await lmOnly.close();
    }
  });

  it("sends no conditional headers without validators", async () => {
    await fetchWithPolicy(wbUrl);
    expect(agency.requests[0]?.headers["if-none-match"]).toBeUndefined();
    expect(agency.requests[0]?.headers["if-modified-since"]).toBeUndefined();
  });
});

describe("fetchWithPolicy: cancellation and messages", () => {
  it("stops with ABORTED when the caller aborts, without retrying", async () => {
    const controller = new AbortController();
    agency.inject({ kind: "delay", ms: 5000 });
    agency.onRequest = () => controller.abort();
    const { delays, sleep } = recordingSleep();
    const err = await fetchError(fetchWithPolicy(wbUrl, { signal: controller.signal, sleep }));
    expect(err.code).toBe("ABORTED");
    expect(err.attempts).toBe(1);
    expect(delays).toEqual([]);
    expect(agency.requests).toHaveLength(1);
  });

  it("stops with ABORTED when the caller aborts during the wait between attempts", async () => {
    const controller = new AbortController();
    agency.inject({ kind: "status", status: 503 }, { times: Infinity });
    const sleep = async () => {
      controller.abort();
      throw new Error("sleep interrupted");
    };
    const err = await fetchError(fetchWithPolicy(wbUrl, { signal: controller.signal, sleep }));
    expect(err.code).toBe("ABORTED");
    expect(err.attempts).toBe(1);
    expect(agency.requests).toHaveLength(1);
  });

  it("names the URL without secret query values or credentials", async () => {
    const url = `${agency.baseUrl}/nowhere?series=A&api_key=SECRET123&subscription=S3CR3T`;
    const err = await fetchError(fetchWithPolicy(url, { redactParams: ["subscription"] }));
    expect(err.message).not.toContain("SECRET123");
    expect(err.message).not.toContain("S3CR3T");
    expect(err.url).toBe(`${agency.baseUrl}/nowhere?series=A&api_key=***&subscription=***`);
    expect(redactUrl("https://user:pw@example.org/x?token=abc&page=2")).toBe("https://example.org/x?token=***&page=2");
  });

  it("throws RangeError at once on a misuse", async () => {
    await expect(fetchWithPolicy(wbUrl, { retries: -1 } as FetchOptions)).rejects.toThrow(RangeError);
    await expect(fetchWithPolicy(wbUrl, { timeoutMs: 0 })).rejects.toThrow("timeoutMs must be a number >= 1, got 0");
    await expect(fetchWithPolicy("/relative/path?key=abc")).rejects.toThrow(TypeError);
    expect(agency.requests).toHaveLength(0);
  });
});

describe("parseRetryAfter (RFC 9110 10.2.3)", () => {
  it("reads delay-seconds and HTTP-dates, and rejects anything else", () => {
    expect(parseRetryAfter("120", 0)).toBe(120_000); // RFC 9110 10.2.3 example "Retry-After: 120"
    // RFC 9110 10.2.3 example "Retry-After: Fri, 31 Dec 1999 23:59:59 GMT", read 59 s earlier
    expect(parseRetryAfter("Fri, 31 Dec 1999 23:59:59 GMT", Date.parse("1999-12-31T23:59:00Z"))).toBe(59_000);
    expect(parseRetryAfter("Fri, 31 Dec 1999 23:59:59 GMT", Date.parse("2000-01-01T00:00:00Z"))).toBe(0);
    expect(parseRetryAfter("-5", 0)).toBeNull();
    expect(parseRetryAfter("1.5", 0)).toBeNull();
    expect(parseRetryAfter("soon", 0)).toBeNull();
    expect(parseRetryAfter(null, 0)).toBeNull();
  });
});

describe("backoffDelay (Brooker 2015, full jitter)", () => {
  const policy = { baseMs: 100, maxMs: 1000, jitter: "full" as const };
  it("doubles the ceiling per retry up to maxMs and draws uniformly below it", () => {
    expect([1, 2, 3, 4, 5, 6].map((r) => backoffDelay(r, { ...policy, jitter: "none" }))).toEqual([
      100, 200, 400, 800, 1000, 1000,
    ]);
    expect(backoffDelay(3, policy, () => 0.5)).toBe(200);
    expect(backoffDelay(3, policy, () => 0)).toBe(0);
    expect(backoffDelay(6, policy, () => 0.999)).toBe(999);
  });
  it("rejects a retry number below 1", () => {
    expect(() => backoffDelay(0, policy)).toThrow("retry must be an integer >= 1, got 0");
  });
});
