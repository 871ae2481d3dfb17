/**
 * Fault drills of the scheduled pipeline, each through the real fetch job: the statistics API
 * times out, answers 500, 503 with Retry-After, 429, a truncated body, an invalid payload or a
 * reset connection; a failing source next to a working one under the scheduler; and, on
 * PostgreSQL, the server restarted mid-run, the database unreachable for seconds mid-commit, and
 * a process killed (SIGKILL) mid-import and mid-refit. After each drill the store is consistent (no new vintage, the previous one still
 * current, no half-written fit set, the observation count unchanged) and the run log tells the
 * truth (status and one sentence naming the URL and what happened). The outcomes are printed as
 * a table; a failing drill fails its test.
 *
 * Data: real series (WDI, PWT 10.01) served by the fake agency, see support/pipeline.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Store } from "@/lib/store/db";
import { runJob, type RunResult } from "@/lib/jobs/runner";
import { fetchJob, startScheduler, stopScheduler } from "@/lib/jobs/scheduler";
import { findRun } from "@/lib/store/runs";
import { listVintages, readAsOf } from "@/lib/store/vintages";
import { setModelInputs } from "@/lib/store/panel";
import { fitSetHistory, listSpecs } from "@/lib/store/fits";
import { startFakeAgency, type FakeAgency, type FakeFault, type FakeObservation, type RecordedRequest } from "@/test/fixtures/fake-agency";
import { postgresUrl, storeTargets, type StoreTarget } from "./support/stores";
import {
  addSource,
  buildCli,
  cutOffDatabase,
  databaseName,
  halfWrittenFitSets,
  haveSharedData,
  holdInsertLock,
  MEASURES,
  panelInputs,
  panelReleases,
  panelSourceInput,
  populationSourceInput,
  restartPostgres,
  runLog,
  sessionAlive,
  sharedData,
  snapshot,
  startCli,
  waitFor,
  waitingInserts,
  type PanelReleases,
  type SourceSnapshot,
} from "./support/pipeline";

if (!haveSharedData) console.warn(`[skip] ${sharedData} is absent: the pipeline drills are skipped (CI has it).`);

const PANEL = "drill-panel";
const POP = "drill-pop";
const panelJob = fetchJob({ name: PANEL, schedule: "0 6 * * *", timezone: "UTC" });
const popJob = fetchJob({ name: POP, schedule: "0 6 * * *", timezone: "UTC" });
/** Stale period for the drills that leave a run behind (in-process runs and children read it). */
const STALE_MS = 2000;

interface DrillRow {
  drill: string;
  store: string;
  run: string;
  "run log says": string;
  "store after the fault": string;
  "next run": string;
  result: string;
}
const table: DrillRow[] = [];

afterAll(() => {
  if (table.length) {
    console.log("\nFault drills of the scheduled pipeline:");
    console.table(table);
  }
});

const cut = (s: string | null | undefined, n = 110) => (!s ? "" : s.length > n ? `${s.slice(0, n - 3)}...` : s);
const plural = (n: number, word: string) => `${n} ${word}${n === 1 ? "" : "s"}`;
const describeState = (a: SourceSnapshot, b: SourceSnapshot) =>
  a.vintages === b.vintages && a.observations === b.observations && a.fitSets === b.fitSets
    ? `unchanged: ${plural(b.vintages, "vintage")}, ${plural(b.observations, "observation")}, ${plural(b.fitSets, "fit set")}`
    : `vintages ${a.vintages} -> ${b.vintages}, observations ${a.observations} -> ${b.observations}, fit sets ${a.fitSets} -> ${b.fitSets}`;

interface DrillOutcome {
  run: { status: string; error: string | null };
  before: SourceSnapshot;
  /** The store right after the faulty run. */
  after: SourceSnapshot;
  /** What the following run did, when the drill makes one. */
  next?: string;
}

/**
 * Run one drill: `body` returns the run it made and the snapshots around it; the row goes into
 * the table whether the drill passes or fails, and a failure is thrown again.
 */
async function drill(name: string, store: string, body: () => Promise<DrillOutcome>): Promise<void> {
  try {
    const r = await body();
    table.push({
      drill: name,
      store,
      run: r.run.status,
      "run log says": cut(r.run.error) || "(no error)",
      "store after the fault": describeState(r.before, r.after),
      "next run": r.next ?? "-",
      result: "pass",
    });
  } catch (err) {
    table.push({ drill: name, store, run: "", "run log says": "", "store after the fault": "", "next run": "", result: `FAIL: ${cut((err as Error).message, 160)}` });
    throw err;
  }
}

const nextRun = (r: RunResult) =>
  `${r.status}: ${plural(r.outcome?.counts.newVintages ?? 0, "new vintage")}, ${plural(r.outcome?.counts.fitSets ?? 0, "fit set")} (${(r.outcome?.details as { status?: string } | undefined)?.status ?? r.error})`;

/**
 * Distinct ticks, one a day, so each run has its own (job, tick) and its own vintage label. They
 * lie in the past, before any real date: runs at the real time (the scheduler drill, the command
 * line) then come later, as releases must (a vintage label older than the latest is refused).
 */
let day = 0;
const nextTick = () => new Date(Date.UTC(2020, 2, 1 + day++, 6, 0, 0));

/** What a failed run must leave: the store exactly as before, the previous vintage current. */
async function expectUntouched(store: Store, source: string, before: SourceSnapshot, current: readonly unknown[]): Promise<SourceSnapshot> {
  const after = await snapshot(store, source);
  expect(after).toEqual(before);
  expect(await readAsOf(store, { source })).toEqual(current);
  expect(await halfWrittenFitSets(store)).toEqual([]);
  return after;
}

/** The logged row of a run, checked against the result runJob returned. */
async function logged(store: Store, r: RunResult) {
  expect(r.runId).not.toBeNull();
  const row = (await findRun(store, r.runId!))!;
  expect(row.status).toBe(r.status);
  expect(row.finishedAt).not.toBeNull();
  if (row.error !== null) expect(row.error).not.toMatch(/\n/); // one sentence, no line breaks
  return row;
}

const url = (agency: FakeAgency, measure: string) => `${agency.urls.sdmx}/data/TEST,DF_RD,1.0/A..${measure}`;
const escape = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");
/** The panel source asks without query parameters; the population source adds startPeriod. */
const panelRequest = (r: RecordedRequest) => r.route === "sdmx" && !r.searchParams.has("startPeriod");
const popRequest = (r: RecordedRequest) => r.route === "sdmx" && r.searchParams.has("startPeriod");

/** Release 1 without the population values of 2019: a further release that changes both sources. */
function withoutPopulation2019(obs: readonly FakeObservation[]): FakeObservation[] {
  return obs.filter((o) => !(o.series === MEASURES.population && o.period === "2019"));
}

for (const target of storeTargets()) {
  describe.skipIf(!haveSharedData)(`fault drills of the fetch job (${target.kind})`, () => {
    let store: Store;
    let agency: FakeAgency;
    let data: PanelReleases;
    const arrivals = new Map<RecordedRequest, number>();

    beforeAll(async () => {
      data = panelReleases();
      store = await target.open();
      agency = await startFakeAgency({ release: { label: "release 1", observations: data.release1, lastModified: new Date("2026-01-15T09:00:00Z") } });
      agency.onRequest = (r) => void arrivals.set(r, Date.now());
      // Short timeout and one retry keep the drills quick; the policy is the one every source uses.
      await addSource(store, panelSourceInput(agency, PANEL, { timeoutMs: 1000, retries: 1 }));
      await addSource(store, populationSourceInput(agency, POP, { urlTemplate: "{base}/data/{agency},{flow},{version}/{key}?startPeriod={startPeriod}", params: { agency: "TEST", flow: "DF_RD", version: "1.0", startPeriod: "1995" }, timeoutMs: 20_000, retries: 1 }));
      await setModelInputs(store, panelInputs(PANEL));
      const first = await runJob(store, panelJob, { tick: nextTick(), trigger: "schedule", instance: "drills" });
      expect(first.status).toBe("succeeded");
      // From here on, a successful fetch would store release 2 as a new vintage.
      agency.publish({ label: "release 2", observations: data.release2 });
    });
    afterAll(async () => {
      await stopScheduler();
      await agency?.close();
      await store?.close();
      await target.cleanup();
    });

    /** Inject `fault` on every request of the panel source, run its fetch job, check the aftermath. */
    async function failingDrill(fault: FakeFault, sentence: RegExp, check?: (requests: RecordedRequest[]) => void) {
      const before = await snapshot(store, PANEL);
      const current = await readAsOf(store, { source: PANEL });
      const asked = agency.requests.length;
      agency.clearFaults();
      agency.inject(fault, { times: Infinity, match: panelRequest });
      const r = await runJob(store, panelJob, { tick: nextTick(), trigger: "schedule", instance: "drills" });
      agency.clearFaults();
      expect(r.status).toBe("failed");
      const row = await logged(store, r);
      expect(row.error).toMatch(sentence);
      check?.(agency.requests.slice(asked));
      const after = await expectUntouched(store, PANEL, before, current);
      expect(before.latestSeq).toBe(1);
      return { run: row, before, after };
    }

    it("upstream timeout: failed, the URL and the time limit named, nothing stored", async () => {
      await drill("upstream timeout (answer after 2.5 s, limit 1 s)", target.kind, () =>
        failingDrill(
          { kind: "delay", ms: 2500 },
          new RegExp(`^GET ${escape(url(agency, MEASURES.researchersPerMillion))} gave no complete response within 1000 ms \\(2 attempts\\)\\.$`),
        ),
      );
    });

    it("HTTP 500 after retries: failed, status and attempts named, nothing stored", async () => {
      await drill("HTTP 500 on every attempt", target.kind, () =>
        failingDrill(
          { kind: "status", status: 500 },
          new RegExp(`^GET ${escape(url(agency, MEASURES.researchersPerMillion))} answered HTTP 500 Internal Server Error \\(2 attempts\\)\\.$`),
          (requests) => expect(requests.map((q) => q.status)).toEqual([500, 500]), // retried once, then gave up
        ),
      );
    });

    it("HTTP 503 with Retry-After, still unavailable: the wait is honoured, then failed", async () => {
      await drill("HTTP 503 + Retry-After: 1 on every attempt", target.kind, () =>
        failingDrill(
          { kind: "status", status: 503, retryAfter: 1 },
          new RegExp(`^GET ${escape(url(agency, MEASURES.researchersPerMillion))} answered HTTP 503 Service Unavailable \\(2 attempts\\)\\.$`),
          (requests) => {
            expect(requests.map((q) => q.status)).toEqual([503, 503]);
            // RFC 9110 10.2.3: the retry came no sooner than the 1 second asked for.
            expect(arrivals.get(requests[1]!)! - arrivals.get(requests[0]!)!).toBeGreaterThanOrEqual(990);
          },
        ),
      );
    });

    it("HTTP 429 Too Many Requests: the wait is honoured, then failed", async () => {
      await drill("HTTP 429 + Retry-After: 1 on every attempt", target.kind, () =>
        failingDrill(
          { kind: "status", status: 429, retryAfter: 1 },
          new RegExp(`^GET ${escape(url(agency, MEASURES.researchersPerMillion))} answered HTTP 429 Too Many Requests \\(2 attempts\\)\\.$`),
          (requests) => expect(arrivals.get(requests[1]!)! - arrivals.get(requests[0]!)!).toBeGreaterThanOrEqual(990), // RFC 6585 4
        ),
      );
    });

    it("truncated body: failed, the bytes received and announced named, nothing stored", async () => {
      await drill("truncated body (Content-Length not reached)", target.kind, () =>
        failingDrill(
          { kind: "truncate", keepBytes: 200 },
          new RegExp(`^GET ${escape(url(agency, MEASURES.researchersPerMillion))} sent 200 of the \\d+ bytes announced by Content-Length \\(2 attempts\\)\\.$`),
        ),
      );
    });

    it("connection reset: failed, the URL named, nothing stored", async () => {
      await drill("connection reset before an answer", target.kind, () =>
        failingDrill({ kind: "reset" }, new RegExp(`^GET ${escape(url(agency, MEASURES.researchersPerMillion))} could not be reached \\(.+\\) \\(2 attempts\\)\\.$`)),
      );
    });

    it("invalid payload: failed, the release rejected with the payload's URL and the parser's problem", async () => {
      await drill("invalid payload (JSON cut in half, HTTP 200)", target.kind, () =>
        failingDrill(
          { kind: "invalid" },
          // Every payload is read before anything is stored, so the problems of all three are
          // counted, each with its URL, place and code (the sentence is cut at 400 characters).
          new RegExp(
            `^The release was not stored \\(3 problems\\): ${escape(url(agency, MEASURES.researchersPerMillion))} line 1, column \\d+: the JSON text ends .+ \\[JSON_TRUNCATED\\]; ${escape(url(agency, MEASURES.population))} line 1, column \\d+: `,
          ),
        ),
      );
    });

    it("HTTP 503 with Retry-After once, then 200: the wait is honoured and the release is stored", async () => {
      await drill("HTTP 503 + Retry-After: 1 once, then 200", target.kind, async () => {
        const before = await snapshot(store, PANEL);
        const asked = agency.requests.length;
        agency.inject({ kind: "status", status: 503, retryAfter: 1 }, { times: 1, match: panelRequest });
        const r = await runJob(store, panelJob, { tick: nextTick(), trigger: "schedule", instance: "drills" });
        expect(r.status).toBe("succeeded");
        const row = await logged(store, r);
        const requests = agency.requests.slice(asked);
        expect(requests.map((q) => q.status)).toEqual([503, 200, 200, 200]);
        expect(arrivals.get(requests[1]!)! - arrivals.get(requests[0]!)!).toBeGreaterThanOrEqual(990);
        expect(row.counts).toMatchObject({ newVintages: 1, fitSets: 2 });
        const after = await snapshot(store, PANEL);
        expect(after.vintages).toBe(before.vintages + 1);
        expect(after.fitSets).toBe(before.fitSets + 2);
        expect(await readAsOf(store, { source: PANEL })).toHaveLength(data.release2.length);
        expect(await halfWrittenFitSets(store)).toEqual([]);
        return { run: row, before, after };
      });
    });

    it("a failing source does not stop the others: under the scheduler, one source fails and the other gets its vintage", async () => {
      await drill("one source failing (HTTP 500) beside a working one, scheduler", target.kind, async () => {
        const before = await snapshot(store, PANEL);
        const popBefore = await snapshot(store, POP);
        expect(popBefore.vintages).toBe(0);
        agency.publish({ label: "release 3", observations: data.release1 });
        agency.clearFaults();
        agency.inject({ kind: "status", status: 500 }, { times: Infinity, match: panelRequest });
        for (const name of [PANEL, POP]) await store.prisma.source.update({ where: { name }, data: { schedule: "*/2 * * * * *" } });
        await startScheduler(store, { instance: "drills-scheduler", reconcileMs: 60_000 });
        try {
          await waitFor("the working source's vintage and the failing source's failed run", async () => {
            const pop = await runLog(store, `fetch:${POP}`);
            const panel = await runLog(store, `fetch:${PANEL}`);
            return pop.some((r) => r.status === "succeeded" && r.counts?.newVintages === 1) && panel.some((r) => r.instance === "drills-scheduler" && r.status === "failed");
          }, 60_000);
        } finally {
          await stopScheduler();
          for (const name of [PANEL, POP]) await store.prisma.source.update({ where: { name }, data: { schedule: "0 6 * * *" } });
          agency.clearFaults();
        }
        // Runs still finishing when the scheduler stopped are given time to end.
        await waitFor("no run left running", async () => (await runLog(store)).every((r) => r.status !== "running"), 30_000);
        const popRuns = await runLog(store, `fetch:${POP}`);
        expect(popRuns.filter((r) => r.status === "failed")).toEqual([]);
        const popVintages = await listVintages(store, POP);
        expect(popVintages).toHaveLength(1);
        expect(await readAsOf(store, { source: POP })).toHaveLength(data.release1.filter((o) => o.series === MEASURES.population).length);
        const failed = (await runLog(store, `fetch:${PANEL}`)).filter((r) => r.instance === "drills-scheduler");
        expect(failed.length).toBeGreaterThanOrEqual(1);
        for (const f of failed) expect(f.error).toBe(`GET ${url(agency, MEASURES.researchersPerMillion)} answered HTTP 500 Internal Server Error (2 attempts).`);
        // The failing source's store is as it was (and the population source feeds no model: no refit).
        const after = await snapshot(store, PANEL);
        expect(after).toEqual(before);
        return { run: { status: `failed (x${failed.length})`, error: failed[0]!.error }, before, after, next: `${POP} beside it: succeeded, vintage 1 stored` };
      });
    });

    // PostgreSQL only: the embedded store has no server to restart and is one process at a time.
    if (target.kind === "postgres") describe("PostgreSQL: database restarts and killed processes", () => {
      let cliError: string | null = null;
      const staleBefore = process.env.IDEAFRONT_STALE_AFTER_MS;
      beforeAll(() => {
        cliError = buildCli();
        process.env.IDEAFRONT_STALE_AFTER_MS = String(STALE_MS);
      });
      afterAll(() => {
        if (staleBefore === undefined) delete process.env.IDEAFRONT_STALE_AFTER_MS;
        else process.env.IDEAFRONT_STALE_AFTER_MS = staleBefore;
      });

      it("database restarted mid-run: the run caught in its commit fails with a readable sentence, the one fetching reconnects", async () => {
        await drill("database restarted mid-commit (and mid-fetch of another source)", target.kind, async () => {
          const dbUrl = target.env().DATABASE_URL!;
          const before = await snapshot(store, PANEL);
          const current = await readAsOf(store, { source: PANEL });
          const popBefore = await snapshot(store, POP);
          agency.publish({ label: "release 4", observations: withoutPopulation2019(data.release2) });
          // The population source's fetch is in flight during the restart (answered after 8 s).
          agency.inject({ kind: "delay", ms: 8000 }, { times: 1, match: popRequest });
          const lock = await holdInsertLock(dbUrl, "observation");
          let panelRun: Promise<RunResult>;
          let popRun: Promise<RunResult>;
          try {
            panelRun = runJob(store, panelJob, { tick: nextTick(), trigger: "schedule", instance: "drills" });
            // The population source's last vintage came from the scheduler drill, at the real time.
            popRun = runJob(store, popJob, { tick: new Date(), trigger: "schedule", instance: "drills" });
            await waitFor("the panel run blocked in its commit", async () => (await waitingInserts(postgresUrl!, databaseName(dbUrl), "observation")).length > 0, 30_000);
            await waitFor("the population fetch in flight", async () => agency.requests.some((q) => popRequest(q) && q.status === undefined), 30_000);
            await restartPostgres(postgresUrl!);
          } finally {
            await lock.release();
          }
          const panelResult = await panelRun;
          const popResult = await popRun;

          expect(panelResult.status).toBe("failed");
          // The cause in brackets is the driver's: the server's "terminating connection due to
          // administrator command", or the client's own note when the session died between two
          // statements of the transaction.
          expect(panelResult.error).toMatch(/^The database connection was lost during the run \((terminating connection due to administrator command|Connection terminated unexpectedly|Client has encountered a connection error and is not queryable)\); the interrupted step committed nothing and the next run redoes the work\.$/);
          const row = await logged(store, panelResult);
          expect(row.error).toBe(panelResult.error);
          const afterFault = await expectUntouched(store, PANEL, before, current);

          // The other run's fetch ended after the restart: the pool reconnected and the vintage is stored.
          expect(popResult.status).toBe("succeeded");
          expect((await snapshot(store, POP)).vintages).toBe(popBefore.vintages + 1);

          // The next run succeeds.
          const next = await runJob(store, panelJob, { tick: nextTick(), trigger: "schedule", instance: "drills" });
          expect(next.status).toBe("succeeded");
          expect(next.outcome!.counts).toMatchObject({ newVintages: 1, fitSets: 2 });
          expect((await snapshot(store, PANEL)).vintages).toBe(before.vintages + 1);
          expect(await halfWrittenFitSets(store)).toEqual([]);
          return { run: row, before, after: afterFault, next: nextRun(next) };
        });
      });

      it("database unreachable for 3 s mid-commit: the failure is logged once it is back, nothing stored, the next run succeeds", async () => {
        await drill("database unreachable for 3 s mid-commit (its sessions cut, connections refused)", target.kind, async () => {
          const dbUrl = target.env().DATABASE_URL!;
          const db = databaseName(dbUrl);
          const before = await snapshot(store, PANEL);
          const current = await readAsOf(store, { source: PANEL });
          agency.publish({ label: "release 4b", observations: data.release1 });
          const lock = await holdInsertLock(dbUrl, "observation");
          let run: Promise<RunResult>;
          let backAt = 0;
          try {
            run = runJob(store, panelJob, { tick: nextTick(), trigger: "schedule", instance: "drills" });
            await waitFor("the run blocked in its commit", async () => (await waitingInserts(postgresUrl!, db, "observation")).length > 0, 30_000);
            // Only this test's database goes away (the lock holder's session with it).
            await cutOffDatabase(postgresUrl!, db, 3000);
            backAt = Date.now();
          } finally {
            await lock.release();
          }
          const result = await run;
          expect(result.status).toBe("failed");
          expect(result.error).toMatch(/^The database connection was lost during the run \(terminating connection due to administrator command\); the interrupted step committed nothing and the next run redoes the work\.$/);
          const row = await logged(store, result);
          // The failure could only be written once the database was reachable again.
          expect(+row.finishedAt!).toBeGreaterThanOrEqual(backAt - 1000);
          const afterFault = await expectUntouched(store, PANEL, before, current);
          const next = await runJob(store, panelJob, { tick: nextTick(), trigger: "schedule", instance: "drills" });
          expect(next.status).toBe("succeeded");
          expect(next.outcome!.counts).toMatchObject({ newVintages: 1, fitSets: 2 });
          expect(await halfWrittenFitSets(store)).toEqual([]);
          return { run: row, before, after: afterFault, next: nextRun(next) };
        });
      });

      it("worker SIGKILL mid-import: no partial vintage; abandoned after the stale period; the next run stores the release", async () => {
        expect(cliError).toBeNull();
        await drill("process killed (SIGKILL) mid-import", target.kind, async () => {
          const dbUrl = target.env().DATABASE_URL!;
          const before = await snapshot(store, PANEL);
          const current = await readAsOf(store, { source: PANEL });
          agency.publish({ label: "release 5", observations: data.release2 });
          const lock = await holdInsertLock(dbUrl, "observation");
          const child = startCli(["fetch", "--source", PANEL], target.env(), "drills-killed");
          let pid: number;
          try {
            [pid] = await waitFor("the command's run blocked in its commit", async () => {
              const pids = await waitingInserts(postgresUrl!, databaseName(dbUrl), "observation");
              return pids.length ? pids : undefined;
            }, 60_000);
            child.child.kill("SIGKILL");
            expect(await child.exited).toBe("SIGKILL");
          } finally {
            await lock.release();
          }
          await waitFor("the killed session to end", async () => !(await sessionAlive(postgresUrl!, pid!)), 30_000);
          const afterFault = await expectUntouched(store, PANEL, before, current);
          const killed = (await runLog(store, `fetch:${PANEL}`)).find((r) => r.instance === "drills-killed")!;
          expect(killed.status).toBe("running");

          await new Promise((r) => setTimeout(r, STALE_MS + 500));
          const next = await runJob(store, panelJob, { tick: nextTick(), trigger: "schedule", instance: "drills" });
          expect(next.status).toBe("succeeded");
          expect(next.outcome!.counts).toMatchObject({ newVintages: 1, fitSets: 2 });
          const row = (await findRun(store, killed.id))!;
          expect(row).toMatchObject({ status: "abandoned", error: "The instance running this job stopped before it finished (no heartbeat); the next run redoes the work." });
          expect((await snapshot(store, PANEL)).vintages).toBe(before.vintages + 1);
          expect(await readAsOf(store, { source: PANEL })).toHaveLength(data.release2.length);
          expect(await halfWrittenFitSets(store)).toEqual([]);
          return { run: row, before, after: afterFault, next: nextRun(next) };
        });
      });

      it("worker SIGKILL mid-refit: the vintage stands, no half-written fit set; the next run completes the fit sets", async () => {
        expect(cliError).toBeNull();
        await drill("process killed (SIGKILL) mid-refit", target.kind, async () => {
          const dbUrl = target.env().DATABASE_URL!;
          const before = await snapshot(store, PANEL);
          agency.publish({ label: "release 6", observations: withoutPopulation2019(data.release1) });
          const lock = await holdInsertLock(dbUrl, "fit_set");
          const child = startCli(["fetch", "--source", PANEL], target.env(), "drills-killed-refit");
          let pid: number;
          try {
            [pid] = await waitFor("the command's refit blocked writing its fit set", async () => {
              const pids = await waitingInserts(postgresUrl!, databaseName(dbUrl), "fit_set");
              return pids.length ? pids : undefined;
            }, 60_000);
            child.child.kill("SIGKILL");
            expect(await child.exited).toBe("SIGKILL");
          } finally {
            await lock.release();
          }
          await waitFor("the killed session to end", async () => !(await sessionAlive(postgresUrl!, pid!)), 30_000);
          // The vintage was committed before the refit began; the fit sets are as they were.
          const mid = await snapshot(store, PANEL);
          expect(mid.vintages).toBe(before.vintages + 1);
          expect(mid.fitSets).toBe(before.fitSets);
          expect(await halfWrittenFitSets(store)).toEqual([]);

          await new Promise((r) => setTimeout(r, STALE_MS + 500));
          // The agency has nothing new (304), yet the run completes the refit the killed one left.
          const next = await runJob(store, panelJob, { tick: nextTick(), trigger: "schedule", instance: "drills" });
          expect(next.status).toBe("succeeded");
          expect(next.outcome!.details).toMatchObject({ status: "not-modified" });
          expect(next.outcome!.counts).toMatchObject({ newVintages: 0, fitSets: 2 });
          const latest = (await listVintages(store, PANEL)).at(-1)!;
          for (const s of await listSpecs(store, { activeOnly: true })) {
            expect((await fitSetHistory(store, s.id)).at(-1)!.asOf).toEqual({ [PANEL]: { seq: latest.seq, label: latest.label } });
          }
          const killed = (await findRun(store, (await runLog(store, `fetch:${PANEL}`)).find((r) => r.instance === "drills-killed-refit")!.id))!;
          expect(killed).toMatchObject({ status: "abandoned", error: "The instance running this job stopped before it finished (no heartbeat); the next run redoes the work." });
          expect(await halfWrittenFitSets(store)).toEqual([]);
          return { run: killed, before, after: mid, next: nextRun(next) };
        });
      });
    });
  });
}
