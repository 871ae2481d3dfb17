/**
 * Several workers on one PostgreSQL database: two processes of the compiled command line
 * (`ideafront worker`, different IDEAFRONT_INSTANCE) run a source scheduled every 2 seconds
 * against the fake agency. Every tick is run (or logged as skipped) exactly once, both instances
 * take ticks, and runs of the job never overlap, even when one run outlasts a tick. A worker
 * killed with SIGKILL in the middle of committing a vintage leaves nothing of it; after the stale
 * period its run is marked abandoned and the other worker completes the work.
 *
 * PostgreSQL only (the embedded store is one process at a time): skipped without TEST_DATABASE_URL.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Store } from "@/lib/store/db";
import { listVintages, readAsOf } from "@/lib/store/vintages";
import { startFakeAgency, type FakeAgency } from "@/test/fixtures/fake-agency";
import { postgresUrl, storeTargets, type StoreTarget } from "./support/stores";
import { addSource, buildCli, databaseName, holdInsertLock, runLog, sessionAlive, startCli, waitFor, waitingInserts, type CliProcess, type RunLogRow } from "./support/pipeline";
import type { SourceDefinitionInput } from "@/lib/ingestion/sources";

if (!postgresUrl) console.warn("[skip] TEST_DATABASE_URL is not set: the two-worker tests need a PostgreSQL server and are skipped.");

const SOURCE = "fake-rse";
const JOB = `fetch:${SOURCE}`;
const EVERY_2_SECONDS = "*/2 * * * * *";
/** Stale period of the drills: short, so an abandoned run is noticed within seconds. */
const STALE_MS = 3000;

/** Researchers (FTE) of the fake agency's default release, SDMX-JSON. */
function rseSource(agency: FakeAgency): SourceDefinitionInput {
  return {
    name: SOURCE,
    title: "Fake agency researchers (FTE)",
    kind: "sdmx",
    format: "sdmx-json",
    baseUrl: agency.urls.sdmx,
    urlTemplate: "{base}/data/{agency},{flow},{version}/{key}",
    params: { agency: "TEST", flow: "DF_RD", version: "1.0" },
    timeoutMs: 20_000,
    retries: 0,
    queries: [{ key: "A..RSE", concept: "researchers_fte", unit: "full-time equivalent" }],
  };
}

function postgresTarget(): StoreTarget | undefined {
  return storeTargets().find((t) => t.kind === "postgres");
}

/** Start a worker and wait until it has scheduled the job. */
async function startWorker(target: StoreTarget, instance: string): Promise<CliProcess> {
  const w = startCli(["worker"], { ...target.env(), IDEAFRONT_STALE_AFTER_MS: String(STALE_MS) }, instance);
  await waitFor(`worker ${instance} to start (output so far: ${JSON.stringify(w.output())})`, async () => /running 1 scheduled job/.test(w.output()), 60_000);
  return w;
}

async function stopWorker(w: CliProcess): Promise<number | string> {
  if (w.child.exitCode === null && w.child.signalCode === null) w.child.kill("SIGTERM");
  return w.exited;
}

/** Ticks (ms) a worker's node-cron reported as missed (the process was too busy to fire them). */
function missedTicks(w: CliProcess): Set<number> {
  const out = new Set<number>();
  for (const m of w.output().matchAll(/missed execution at (.+?)!/g)) out.add(new Date(m[1]!).getTime());
  return out;
}

/** Pairs of runs of one job whose [started, finished] intervals overlap. */
function overlaps(rows: readonly RunLogRow[]): [number, number][] {
  const worked = rows.filter((r) => r.status !== "skipped").sort((a, b) => +a.started_at - +b.started_at);
  const out: [number, number][] = [];
  for (let i = 1; i < worked.length; i++) {
    const prev = worked[i - 1]!, cur = worked[i]!;
    const prevEnd = prev.finished_at ?? new Date(8.64e15);
    if (+cur.started_at < +prevEnd) out.push([prev.id, cur.id]);
  }
  return out;
}

describe.skipIf(!postgresUrl)("two worker processes on one PostgreSQL database", () => {
  let buildError: string | null = null;
  beforeAll(() => {
    buildError = buildCli();
  });

  describe("every 2 seconds, for several ticks", () => {
    let target: StoreTarget;
    let store: Store;
    let agency: FakeAgency;
    const workers: CliProcess[] = [];

    beforeAll(async () => {
      expect(buildError).toBeNull();
      target = postgresTarget()!;
      store = await target.open();
      agency = await startFakeAgency();
      await addSource(store, rseSource(agency), { schedule: EVERY_2_SECONDS });
    });
    afterAll(async () => {
      for (const w of workers) await stopWorker(w);
      await agency?.close();
      await store?.close();
      await target?.cleanup();
    });

    it("runs each tick exactly once, on both instances, never overlapping itself", async () => {
      workers.push(await startWorker(target, "worker-a"), await startWorker(target, "worker-b"));
      const bothUp = Date.now();
      const firstTick = Math.ceil(bothUp / 2000) * 2000 + 2000;
      // One run outlasts the next two ticks and the stale period (3 s): the fake agency answers it
      // after 5 seconds. Its heartbeat must keep the other worker from taking it for dead.
      await waitFor("a few ticks to be run", async () => (await runLog(store, JOB)).filter((r) => r.status === "succeeded").length >= 3, 60_000);
      agency.inject({ kind: "delay", ms: 5000 }, { route: "sdmx" });
      // Which instance claims a tick is a race (each waits a random 0-250 ms first): wait until each
      // has won one, which takes a few ticks (the wait is a safety net, not a measure).
      await waitFor("the slow run, a tick skipped during it, eight ticks in all, and runs by both instances", async () => {
        const rows = await runLog(store, JOB);
        const instances = new Set(rows.filter((r) => r.status === "succeeded").map((r) => r.instance));
        return rows.some((r) => r.status === "skipped") && rows.filter((r) => +r.tick >= firstTick).length >= 8 && instances.size === 2;
      }, 120_000);
      const lastTickBeforeStop = Math.floor(Date.now() / 2000) * 2000 - 2000;
      const codes = [await stopWorker(workers[0]!), await stopWorker(workers[1]!)];
      expect(codes).toEqual([0, 0]); // SIGTERM: the workers stop cleanly

      const rows = await runLog(store, JOB);
      // Exactly once: one row per tick (the unique (job, tick) index makes a second claim impossible;
      // this counts what happened).
      const perTick = new Map<number, number>();
      for (const r of rows) perTick.set(+r.tick, (perTick.get(+r.tick) ?? 0) + 1);
      expect([...perTick.values()].filter((n) => n !== 1)).toEqual([]);
      // And no tick was dropped while both workers ran, apart from ticks both processes reported
      // missed (node-cron fires a tick up to 1 s late; a machine busier than that skips it).
      const missedByBoth = [...missedTicks(workers[0]!)].filter((t) => missedTicks(workers[1]!).has(t));
      const dropped: string[] = [];
      for (let t = firstTick; t <= lastTickBeforeStop; t += 2000) {
        if (!perTick.has(t) && !missedByBoth.includes(t)) dropped.push(new Date(t).toISOString());
      }
      expect(dropped).toEqual([]);
      expect((lastTickBeforeStop - firstTick) / 2000 + 1).toBeGreaterThanOrEqual(7); // several ticks

      // Both instances took ticks.
      const byInstance = new Map<string, number>();
      for (const r of rows.filter((x) => x.status === "succeeded")) byInstance.set(r.instance, (byInstance.get(r.instance) ?? 0) + 1);
      console.log(`[workers] ${rows.length} rows: ${[...byInstance].map(([i, n]) => `${i} ran ${n}`).join(", ")}, ${rows.filter((r) => r.status === "skipped").length} skipped`);
      expect([...byInstance.keys()].sort()).toEqual(["worker-a", "worker-b"]);

      // Never overlapping: the runs' intervals are disjoint, and the tick that came during the slow
      // run was logged as skipped, naming it.
      expect(overlaps(rows)).toEqual([]);
      const slow = rows.find((r) => r.finished_at && +r.finished_at - +r.started_at >= 4500)!;
      expect(slow).toBeDefined();
      const skipped = rows.filter((r) => r.status === "skipped");
      expect(skipped.length).toBeGreaterThanOrEqual(2);
      for (const s of skipped) expect(s.error).toMatch(/^Skipped: run \d+ of this job was still in progress\.$/);
      expect(skipped.some((s) => s.error === `Skipped: run ${slow.id} of this job was still in progress.`)).toBe(true);

      // Every run succeeded; the first stored the release, the others found it unchanged (304).
      expect(rows.filter((r) => !["succeeded", "skipped"].includes(r.status))).toEqual([]);
      expect(rows.filter((r) => r.counts?.newVintages === 1)).toHaveLength(1);
      expect(await listVintages(store, SOURCE)).toHaveLength(1);
    });
  });

  describe("a worker stopped (SIGTERM) while a run is in progress", () => {
    let target: StoreTarget;
    let store: Store;
    let agency: FakeAgency;
    let worker: CliProcess | null = null;

    beforeAll(async () => {
      expect(buildError).toBeNull();
      target = postgresTarget()!;
      store = await target.open();
      agency = await startFakeAgency();
      await addSource(store, rseSource(agency), { schedule: EVERY_2_SECONDS });
    });
    afterAll(async () => {
      if (worker) await stopWorker(worker);
      await agency?.close();
      await store?.close();
      await target?.cleanup();
    });

    it("finishes the run and logs it before exiting", async () => {
      // The first run's request is answered after 4 seconds.
      agency.inject({ kind: "delay", ms: 4000 }, { route: "sdmx" });
      worker = await startWorker(target, "worker-stopping");
      const running = await waitFor("a run in progress", async () => (await runLog(store, JOB)).find((r) => r.status === "running"), 30_000);
      worker.child.kill("SIGTERM");
      expect(await worker.exited).toBe(0);
      const row = (await runLog(store, JOB)).find((r) => r.id === running.id)!;
      expect(row).toMatchObject({ status: "succeeded", error: null });
      expect(row.counts).toMatchObject({ newVintages: 1 });
      expect(await listVintages(store, SOURCE)).toHaveLength(1);
      expect(worker.output()).toMatch(/waiting for 1 running job to finish/);
      expect((await runLog(store, JOB)).filter((r) => r.status === "running")).toEqual([]);
    });
  });

  describe("a worker killed (SIGKILL) while committing a vintage", () => {
    let target: StoreTarget;
    let store: Store;
    let agency: FakeAgency;
    const workers: CliProcess[] = [];
    let lock: Awaited<ReturnType<typeof holdInsertLock>> | null = null;

    beforeAll(async () => {
      expect(buildError).toBeNull();
      target = postgresTarget()!;
      store = await target.open();
      agency = await startFakeAgency();
      await addSource(store, rseSource(agency), { schedule: EVERY_2_SECONDS });
    });
    afterAll(async () => {
      await lock?.release();
      for (const w of workers) await stopWorker(w);
      await agency?.close();
      await store?.close();
      await target?.cleanup();
    });

    it("leaves no partial vintage; the run is marked abandoned and the other worker completes the work", async () => {
      const url = target.env().DATABASE_URL!;
      // Inserts into observation wait: the first run stops inside its commit transaction, after
      // the vintage row and the series were written in it.
      lock = await holdInsertLock(url, "observation");
      workers.push(await startWorker(target, "worker-a"), await startWorker(target, "worker-b"));
      const [blocked] = await waitFor("a run blocked in its commit", async () => {
        const pids = await waitingInserts(postgresUrl!, databaseName(url), "observation");
        return pids.length ? pids : undefined;
      }, 60_000);
      expect(blocked).toBeGreaterThan(0);
      const running = (await runLog(store, JOB)).filter((r) => r.status === "running");
      expect(running).toHaveLength(1);
      const victim = workers.find((w) => w.instance === running[0]!.instance)!;
      const survivor = workers.find((w) => w !== victim)!;
      victim.child.kill("SIGKILL");
      expect(await victim.exited).toBe("SIGKILL");
      // A backend waiting for a lock does not read its socket: it notices that its client is gone
      // once the lock is granted and it answers, and then rolls the transaction back.
      await lock.release();
      lock = null;
      await waitFor("the killed run's session to end", async () => !(await sessionAlive(postgresUrl!, blocked!)), 30_000);

      // Nothing of the interrupted commit is there.
      expect(await listVintages(store, SOURCE)).toEqual([]);
      const series = await store.sql.query<{ n: string }>(`SELECT count(*) AS n FROM series`);
      expect(Number(series.rows[0]!.n)).toBe(0);
      expect(await readAsOf(store, { source: SOURCE })).toEqual([]);
      // The log still says "running" until the stale period has passed without a heartbeat ...
      expect((await runLog(store, JOB)).find((r) => r.id === running[0]!.id)!.status).toBe("running");

      // ... then the surviving worker marks it abandoned and runs the job to completion.
      const done = await waitFor("the survivor to store the release", async () => {
        const rows = await runLog(store, JOB);
        return rows.find((r) => r.status === "succeeded" && r.counts?.newVintages === 1);
      }, 60_000);
      expect(done.instance).toBe(survivor.instance);
      const killed = (await runLog(store, JOB)).find((r) => r.id === running[0]!.id)!;
      expect(killed).toMatchObject({
        status: "abandoned",
        error: "The instance running this job stopped before it finished (no heartbeat); the next run redoes the work.",
      });
      expect(+killed.finished_at!).toBeLessThanOrEqual(+done.started_at);
      const vintages = await listVintages(store, SOURCE);
      expect(vintages).toHaveLength(1);
      expect(vintages[0]!.observationCount).toBe(agency.release.observations.filter((o) => o.series === "RSE").length);
      expect(await readAsOf(store, { source: SOURCE })).toHaveLength(vintages[0]!.observationCount);
      // While the dead run still looked alive, ticks were skipped, not run beside it.
      expect(overlaps(await runLog(store, JOB))).toEqual([]);
      expect(await stopWorker(survivor)).toBe(0);
    });
  });
});
