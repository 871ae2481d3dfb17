/**
 * Scheduled fetching end to end, against the local fake agency (test/fixtures/fake-agency, standard
 * responses of invented values on 127.0.0.1) and real stores: fetchSource -> connector -> parse ->
 * map -> commit.
 *
 * For a World Bank indicator read over three pages (per_page sent as a string, as the live API
 * sometimes does), an SDMX-JSON data query and a Eurostat-style JSON-stat dataset:
 * - the first fetch stores one vintage holding exactly the served values (flags included);
 * - a second fetch answered 304 Not Modified creates nothing;
 * - after publish() of a new release, a fetch stores a second vintage whose added / revised /
 *   removed counts equal those computed here from the two served releases.
 * A fetch that fails (500 after every retry, a body cut short, a payload that does not parse, a
 * failure on page 2 of 3) writes nothing: the previous vintage stays current and the validators
 * of the last good fetch are kept, so the next fetch after the fault succeeds.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Store } from "@/lib/store/db";
import { listVintages, readAsOf, revisionsBetween, upsertSource } from "@/lib/store/vintages";
import { fetchSource } from "@/lib/jobs/fetch-source";
import { ImportError } from "@/lib/jobs/import-release";
import { FetchError } from "@/lib/ingestion/http";
import { parseSourceDefinition, type SourceDefinitionInput } from "@/lib/ingestion/sources";
import { startFakeAgency, type FakeAgency, type FakeObservation } from "@/test/fixtures/fake-agency";
import { storeTargets } from "./support/stores";

/** No waiting between retries (the backoff itself is tested in lib/ingestion/http.test.ts). */
const policy = { sleep: async () => {}, random: () => 0 };

interface Case {
  /** Series code served by the agency for this source (indicator, SDMX MEASURE, JSON-stat dataset). */
  series: string;
  format: string;
  def: (agency: FakeAgency) => SourceDefinitionInput;
  /** Concept and unit the values are stored under. */
  concept: string;
  unit: string;
  /** A status flag the first release serves, and where. */
  flagged: { economy: string; period: string; status: string };
}

const CASES: Case[] = [
  {
    series: "SP.POP.SCIE.RD.P6",
    format: "World Bank API v2, paged",
    concept: "researchers_per_million",
    unit: "per million people",
    flagged: { economy: "FRA", period: "2021", status: "E" },
    def: (a) => ({
      name: "wb-researchers",
      title: "World Bank researchers per million (fake agency)",
      kind: "worldbank",
      format: "worldbank-json",
      baseUrl: a.urls.worldbank,
      urlTemplate: "{base}/country/{codes}/indicator/{indicator}?format=json&per_page={per_page}&page={page}",
      params: { codes: "all" },
      paging: { perPage: 2, maxPages: 10 },
      queries: [{ indicator: "SP.POP.SCIE.RD.P6", concept: "researchers_per_million", unit: "per million people" }],
    }),
  },
  {
    series: "RSE",
    format: "SDMX-JSON 1.0",
    concept: "researchers_fte",
    unit: "FTE",
    flagged: { economy: "FRA", period: "2020", status: "E" },
    def: (a) => ({
      name: "sdmx-researchers",
      title: "SDMX researchers FTE (fake agency)",
      kind: "sdmx",
      format: "sdmx-json",
      baseUrl: a.urls.sdmx,
      urlTemplate: "{base}/data/{agency},{flow},{version}/{key}",
      params: { agency: "TEST", flow: "DF_RD", version: "1.0" },
      queries: [{ key: "A..RSE", concept: "researchers_fte", unit: "{UNIT_MEASURE}" }],
    }),
  },
  {
    series: "rd_p_persocc",
    format: "JSON-stat 2.0",
    concept: "researchers_fte",
    unit: "FTE",
    flagged: { economy: "FRA", period: "2021", status: "p" },
    def: (a) => ({
      name: "jsonstat-researchers",
      title: "Eurostat-style researchers (fake agency)",
      kind: "jsonstat",
      format: "jsonstat",
      baseUrl: a.urls.jsonstat,
      urlTemplate: "{base}/data/{dataset}?format=JSON&lang=EN",
      queries: [{ dataset: "rd_p_persocc", concept: "researchers_fte", unit: "{unit}", filters: { unit: "FTE" } }],
      economyCodeMap: { EL: "GRC" },
    }),
  },
];

/** economy|period -> [value, status] of the served, non-missing values of one series. */
function served(observations: readonly FakeObservation[], series: string): Map<string, [number, string | null]> {
  return new Map(observations.filter((o) => o.series === series && o.value !== null).map((o) => [`${o.economy}|${o.period}`, [o.value as number, o.status ?? null]]));
}

function expectedCounts(a: Map<string, [number, string | null]>, b: Map<string, [number, string | null]>) {
  let added = 0;
  let revised = 0;
  let removed = 0;
  for (const [k, [v, s]] of b) {
    const old = a.get(k);
    if (!old) added++;
    else if (old[0] !== v || old[1] !== s) revised++;
  }
  for (const k of a.keys()) if (!b.has(k)) removed++;
  return { added, revised, removed };
}

/** The second release of a series: one value revised, one flag dropped, one period removed, one added. */
function nextRelease(observations: readonly FakeObservation[], series: string): FakeObservation[] {
  const out: FakeObservation[] = [];
  for (const o of observations) {
    if (o.series !== series) out.push(o);
    else if (o.economy === "DEU" && o.period === "2021") out.push({ ...o, value: (o.value as number) + 50 });
    else if (o.economy === "FRA" && o.status) out.push({ ...o, status: undefined });
    else if (o.economy === "GRC" && o.period === "2020") continue;
    else out.push(o);
  }
  const deu = observations.find((o) => o.series === series && o.economy === "DEU")!;
  out.push({ ...deu, period: "2022", value: 123_456, status: undefined });
  return out;
}

for (const target of storeTargets()) {
  describe(`fetchSource against the fake agency (${target.kind})`, () => {
    let store: Store;
    let agency: FakeAgency;
    let day = 15;
    /** Each fetch on its own day, so each vintage has its own date label. */
    const fetchNext = (name: string) => fetchSource(store, name, { now: new Date(Date.UTC(2026, 1, ++day, 6)), fetchOptions: { policy } });
    const counts = async () => {
      const r = await store.sql.query<{ t: string; n: number }>(
        `SELECT 'vintage' AS t, count(*)::int AS n FROM vintage UNION ALL SELECT 'observation', count(*)::int FROM observation
         UNION ALL SELECT 'series', count(*)::int FROM series UNION ALL SELECT 'economy', count(*)::int FROM economy`,
      );
      return Object.fromEntries(r.rows.map((x) => [x.t, x.n]));
    };
    const storedMap = async (source: string) =>
      new Map((await readAsOf(store, { source })).map((o) => [`${o.economy}|${o.period}`, [o.value, o.status] as [number, string | null]]));

    beforeAll(async () => {
      store = await target.open();
      agency = await startFakeAgency({ worldBankPerPageAsString: true });
      for (const c of CASES) {
        const def = parseSourceDefinition(c.def(agency));
        await upsertSource(store, { name: def.name, title: def.title, kind: def.kind, format: def.format, config: def });
      }
    });
    afterAll(async () => {
      await agency?.close();
      await store?.close();
      await target.cleanup();
    });

    for (const c of CASES) {
      const name = () => c.def(agency).name as string;

      it(`${c.series} (${c.format}): first fetch stores the served values as one vintage`, async () => {
        const first = served(agency.release.observations, c.series);
        const seen = agency.requests.length;
        const r = await fetchNext(name());
        expect(r.status).toBe("new-vintage");
        expect(r.vintage?.seq).toBe(1);
        expect(r.counts).toEqual({ added: first.size, revised: 0, removed: 0, observations: first.size });
        // The values served by the fake agency, flags included; explicitly missing values are not stored.
        expect(await storedMap(name())).toEqual(first);
        expect((await storedMap(name())).get(`${c.flagged.economy}|${c.flagged.period}`)?.[1]).toBe(c.flagged.status);
        const stored = await readAsOf(store, { source: name() });
        expect(new Set(stored.map((o) => [o.concept, o.unit].join("|")))).toEqual(new Set([`${c.concept}|${c.unit}`]));
        const requests = agency.requests.slice(seen);
        if (c.series === "SP.POP.SCIE.RD.P6") {
          // Six rows at per_page=2: pages 1, 2, 3, each answered with per_page as the string "2".
          expect(requests.map((q) => [q.searchParams.get("page"), q.searchParams.get("per_page"), q.status])).toEqual([
            ["1", "2", 200],
            ["2", "2", 200],
            ["3", "2", 200],
          ]);
          const page = (await (await fetch(`${agency.baseUrl}${requests[0]!.url}`)).json()) as [{ per_page: unknown }];
          expect(page[0].per_page).toBe("2");
        } else {
          expect(requests.map((q) => q.status)).toEqual([200]);
        }
      });

      it(`${c.series}: a second fetch answered 304 Not Modified creates nothing`, async () => {
        const before = await counts();
        const seen = agency.requests.length;
        const r = await fetchNext(name());
        expect(r.status).toBe("not-modified");
        const requests = agency.requests.slice(seen);
        expect(requests.map((q) => q.status)).toEqual([304]); // paged queries ask page 1 only
        expect(requests[0]!.headers["if-none-match"]).toMatch(/^"/);
        expect(await counts()).toEqual(before);
        expect((await listVintages(store, name())).length).toBe(1);
      });

      it(`${c.series}: after publish(), a fetch stores a second vintage with the revisions of the two releases`, async () => {
        const before = served(agency.release.observations, c.series);
        agency.publish({ label: `${c.series} release 2`, observations: nextRelease(agency.release.observations, c.series) });
        const after = served(agency.release.observations, c.series);
        const exp = expectedCounts(before, after);
        expect(exp).toEqual({ added: 1, revised: 2, removed: 1 }); // DEU 2022 added; DEU 2021 and the FRA flag revised; GRC 2020 removed

        const r = await fetchNext(name());
        expect(r.status).toBe("new-vintage");
        expect(r.vintage?.seq).toBe(2);
        expect({ added: r.counts.added, revised: r.counts.revised, removed: r.counts.removed }).toEqual(exp);
        expect(await storedMap(name())).toEqual(after);
        const revs = await revisionsBetween(store, { source: name(), fromSeq: 1, toSeq: 2 });
        const deu = revs.find((x) => x.economy === "DEU" && x.period === "2021")!;
        expect([deu.kind, deu.oldValue, deu.newValue]).toEqual(["revised", before.get("DEU|2021")![0], after.get("DEU|2021")![0]]);
        expect(revs.find((x) => x.economy === "GRC" && x.period === "2020")?.kind).toBe("removed");
      });
    }

    describe("a failed fetch writes nothing and leaves the previous vintage current", () => {
      const sdmx = "sdmx-researchers";
      let before: Record<string, number>;
      let current: Map<string, [number, string | null]>;
      let fetchState: unknown;

      beforeAll(async () => {
        // A new release is waiting, so a successful fetch would store vintage 3.
        agency.publish({ label: "RSE release 3", observations: agency.release.observations.map((o) => (o.series === "RSE" && o.economy === "GRC" ? { ...o, value: (o.value as number) + 1 } : o)) });
      });
      const snapshot = async () => {
        before = await counts();
        current = await storedMap(sdmx);
        fetchState = (await store.prisma.source.findUniqueOrThrow({ where: { name: sdmx } })).fetchState;
      };
      const unchanged = async () => {
        expect(await counts()).toEqual(before);
        expect(await storedMap(sdmx)).toEqual(current);
        const vintages = await listVintages(store, sdmx);
        expect(vintages.map((v) => v.seq)).toEqual([1, 2]);
        expect((await store.prisma.source.findUniqueOrThrow({ where: { name: sdmx } })).fetchState).toEqual(fetchState);
      };

      it("HTTP 500 on every attempt: FetchError after the retries", async () => {
        await snapshot();
        const seen = agency.requests.length;
        agency.inject({ kind: "status", status: 500 }, { route: "sdmx", times: Infinity });
        const err = await fetchNext(sdmx).catch((e: unknown) => e);
        agency.clearFaults();
        expect(err).toBeInstanceOf(FetchError);
        expect(err).toMatchObject({ code: "HTTP_STATUS", status: 500, attempts: 4 }); // the definition's default: 3 retries
        expect(agency.requests.slice(seen).map((q) => q.status)).toEqual([500, 500, 500, 500]);
        await unchanged();
      });

      it("a body cut short on every attempt: FetchError TRUNCATED", async () => {
        await snapshot();
        agency.inject({ kind: "truncate" }, { route: "sdmx", times: Infinity });
        const err = await fetchNext(sdmx).catch((e: unknown) => e);
        agency.clearFaults();
        expect(err).toBeInstanceOf(FetchError);
        expect(err).toMatchObject({ code: "TRUNCATED" });
        await unchanged();
      });

      it("a payload that does not parse: ImportError with the parser's code and place", async () => {
        await snapshot();
        agency.inject({ kind: "invalid" }, { route: "sdmx", times: 1 });
        const err = await fetchNext(sdmx).catch((e: unknown) => e);
        expect(err).toBeInstanceOf(ImportError);
        const problem = (err as ImportError).problems[0]!;
        expect(problem.code).toBe("JSON_TRUNCATED"); // the fake sends the first half of the JSON text
        expect(problem.location).toMatchObject({ line: expect.any(Number), column: expect.any(Number) });
        await unchanged();
      });

      it("a failure on page 2 of 3 of a paged query: nothing of page 1 is stored", async () => {
        const wb = "wb-researchers";
        const vintages = (await listVintages(store, wb)).length;
        const state = await storedMap(wb);
        const rows = await counts();
        agency.publish({ label: "WB release 3", observations: agency.release.observations.filter((o) => !(o.series === "SP.POP.SCIE.RD.P6" && o.period === "2022")) });
        agency.inject({ kind: "status", status: 500 }, { route: "worldbank", times: Infinity, match: (q) => q.searchParams.get("page") === "2" });
        const err = await fetchNext(wb).catch((e: unknown) => e);
        agency.clearFaults();
        expect(err).toMatchObject({ name: "FetchError", code: "HTTP_STATUS" });
        expect((await listVintages(store, wb)).length).toBe(vintages);
        expect(await storedMap(wb)).toEqual(state);
        expect(await counts()).toEqual(rows);
      });

      it("the next fetch after the faults stores the waiting release", async () => {
        const r = await fetchNext(sdmx);
        expect(r.status).toBe("new-vintage");
        expect(r.vintage?.seq).toBe(3);
        expect({ added: r.counts.added, revised: r.counts.revised, removed: r.counts.removed }).toEqual({ added: 0, revised: 1, removed: 0 });
        expect(await storedMap(sdmx)).toEqual(served(agency.release.observations, "RSE"));
      });
    });
  });
}
