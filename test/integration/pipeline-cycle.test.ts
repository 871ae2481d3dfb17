/**
 * The scheduled pipeline end to end, on both stores: the fetch job of a source on the fake agency
 * (SDMX 2.1 REST, SDMX-JSON) stores a new vintage, refits the active specs and logs the run; a
 * release that revises one economy and adds a year for another refits only those two under the
 * economy-scope `reference` spec, and the change feed says why each moved; an unchanged release
 * (304, or 200 with equal content) stores nothing.
 *
 * Data: real series (World Bank WDI researchers per million and population, Penn World Table
 * 10.01 TFP) served by the fake agency; see support/pipeline.ts for which years of which vintage.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Store } from "@/lib/store/db";
import { runJob } from "@/lib/jobs/runner";
import { fetchJob } from "@/lib/jobs/scheduler";
import { findRun } from "@/lib/store/runs";
import { listVintages, readAsOf } from "@/lib/store/vintages";
import { setModelInputs } from "@/lib/store/panel";
import { changeFeed, fitSetHistory, fitsOfSet, listSpecs, setAlertSettings } from "@/lib/store/fits";
import { startFakeAgency, type FakeAgency, type FakeObservation } from "@/test/fixtures/fake-agency";
import { storeTargets } from "./support/stores";
import { addSource, halfWrittenFitSets, haveSharedData, MEASURES, panelInputs, panelReleases, panelSourceInput, sharedData, snapshot, type PanelReleases } from "./support/pipeline";

if (!haveSharedData) console.warn(`[skip] ${sharedData} is absent: the pipeline cycle tests are skipped (CI has it).`);

const SOURCE = "fake-panel";
const source = { name: SOURCE, schedule: "0 6 * * *", timezone: "UTC" };
const job = fetchJob(source);
const tick = (iso: string) => new Date(iso);

/** Researcher values of `economy` that differ between two releases, computed from the releases themselves. */
function differing(a: readonly FakeObservation[], b: readonly FakeObservation[], measure: string) {
  const key = (o: FakeObservation) => `${o.series}|${o.economy}|${o.period}`;
  const before = new Map(a.filter((o) => o.series === measure).map((o) => [key(o), o.value]));
  const after = b.filter((o) => o.series === measure);
  return {
    revised: after.filter((o) => before.has(key(o)) && before.get(key(o)) !== o.value),
    added: after.filter((o) => !before.has(key(o))),
  };
}

for (const target of storeTargets()) {
  describe.skipIf(!haveSharedData)(`scheduled pipeline, full cycle (${target.kind})`, () => {
    let store: Store;
    let agency: FakeAgency;
    let data: PanelReleases;

    beforeAll(async () => {
      data = panelReleases();
      store = await target.open();
      agency = await startFakeAgency({ release: { label: "release 1", observations: data.release1, lastModified: new Date("2026-01-15T09:00:00Z") } });
      await addSource(store, panelSourceInput(agency, SOURCE));
      await setModelInputs(store, panelInputs(SOURCE));
      // 0.01 percentage points: any visible move of g* is listed with its size.
      await setAlertSettings(store, { gStarThreshold: 0.0001 });
    });
    afterAll(async () => {
      await agency?.close();
      await store?.close();
      await target.cleanup();
    });

    it("first release: a new vintage, a fit set per active spec, a run log row with counts", async () => {
      const r = await runJob(store, job, { tick: tick("2026-02-01T06:00:00Z"), trigger: "schedule", instance: "it-cycle" });
      expect(r.status).toBe("succeeded");
      const vintages = await listVintages(store, SOURCE);
      expect(vintages.map((v) => [v.seq, v.label, v.observationCount])).toEqual([[1, "2026-02-01", data.release1.length]]);
      expect(await readAsOf(store, { source: SOURCE })).toHaveLength(data.release1.length);
      const specs = await listSpecs(store, { activeOnly: true });
      expect(specs.map((s) => s.name).sort()).toEqual(["reference", "team-default"]);
      for (const s of specs) {
        const sets = await fitSetHistory(store, s.id);
        expect(sets).toHaveLength(1);
        expect(sets[0]!.asOf).toEqual({ [SOURCE]: { seq: 1, label: "2026-02-01" } });
        expect((await fitsOfSet(store, sets[0]!.id)).map((f) => f.economy)).toEqual([...data.economies]);
      }
      const jobRuns = await store.sql.query<{ n: string | number }>(`SELECT count(*) AS n FROM fit_set WHERE job_run_id = $1`, [r.runId]);
      expect(Number(jobRuns.rows[0]!.n)).toBe(2); // both fit sets name the run that made them
      const row = await findRun(store, r.runId!);
      expect(row).toMatchObject({ status: "succeeded", error: null, trigger: "schedule", instance: "it-cycle", job: `fetch:${SOURCE}` });
      expect(row!.counts).toEqual({ newVintages: 1, added: data.release1.length, revised: 0, removed: 0, fitSets: 2, economiesRefitted: 2 * data.economies.length });
      expect(row!.finishedAt).not.toBeNull();
      expect(row!.progress).toMatchObject({ done: 2, total: 2, message: "new-vintage" });
      expect(await halfWrittenFitSets(store)).toEqual([]);
      // Nothing to compare with yet: no change rows.
      expect(await changeFeed(store, {})).toEqual([]);
    });

    it("an unchanged release stores nothing: 304 Not Modified, then 200 with equal content", async () => {
      const before = await snapshot(store, SOURCE);
      const asked = agency.requests.length;
      const r304 = await runJob(store, job, { tick: tick("2026-02-02T06:00:00Z"), trigger: "schedule", instance: "it-cycle" });
      expect(r304.status).toBe("succeeded");
      expect(r304.outcome!.details).toMatchObject({ status: "not-modified", vintage: null });
      expect(r304.outcome!.counts).toMatchObject({ newVintages: 0, fitSets: 0, economiesRefitted: 0 });
      // Every query was asked conditionally and answered 304 (RFC 9110 13.1.2, 15.4.5).
      const conditional = agency.requests.slice(asked);
      expect(conditional).toHaveLength(3);
      expect(conditional.every((q) => q.headers["if-none-match"] !== undefined && q.status === 304)).toBe(true);
      expect(await snapshot(store, SOURCE)).toEqual(before);

      // The agency republishes the same values: new Last-Modified, new bytes (the message's prepared
      // stamp), so 200 with a new ETag, but the content equals the latest vintage.
      agency.publish({ label: "release 1 again", observations: data.release1 });
      const same = await runJob(store, job, { tick: tick("2026-02-03T06:00:00Z"), trigger: "schedule", instance: "it-cycle" });
      expect(same.status).toBe("succeeded");
      expect(same.outcome!.details).toMatchObject({ status: "unchanged", vintage: { seq: 1, label: "2026-02-01" } });
      expect(same.outcome!.counts).toMatchObject({ newVintages: 0, added: 0, revised: 0, removed: 0, fitSets: 0 });
      expect(agency.requests.slice(-3).every((q) => q.status === 200)).toBe(true);
      expect(await snapshot(store, SOURCE)).toEqual(before);
    });

    it("a release that revises one economy and adds a year for another: new vintage, only those two refitted under `reference`", async () => {
      const expected = differing(data.release1, data.release2, MEASURES.researchersPerMillion);
      // The releases differ exactly as designed (checked on the releases, not on the store).
      expect(new Set(expected.revised.map((o) => o.economy))).toEqual(new Set([data.revised]));
      expect(expected.added.map((o) => [o.economy, o.period])).toEqual([[data.extended, String(data.addedYear)]]);

      const specs = new Map((await listSpecs(store, { activeOnly: true })).map((s) => [s.name, s]));
      const ref = specs.get("reference")!;
      const before = await fitSetHistory(store, ref.id);
      const beforeFits = new Map((await fitsOfSet(store, before.at(-1)!.id)).map((f) => [f.economy, f]));

      agency.publish({ label: "release 2", observations: data.release2 });
      const r = await runJob(store, job, { tick: tick("2026-05-01T06:00:00Z"), trigger: "schedule", instance: "it-cycle" });
      expect(r.status).toBe("succeeded");
      expect(r.outcome!.counts).toMatchObject({ newVintages: 1, added: expected.added.length, revised: expected.revised.length, removed: 0, fitSets: 2 });
      expect((await listVintages(store, SOURCE)).map((v) => v.label)).toEqual(["2026-02-01", "2026-05-01"]);

      const refit = (r.outcome!.details as { refit: { spec: string; economiesRefitted: number; economiesCarried: number }[] }).refit;
      // Economy scope: the two changed economies are re-estimated, the other two carried over.
      expect(refit.find((o) => o.spec === "reference")).toMatchObject({ economiesRefitted: 2, economiesCarried: 2 });
      // Panel scope pools every economy: any change refits all of them.
      expect(refit.find((o) => o.spec === "team-default")).toMatchObject({ economiesRefitted: 4, economiesCarried: 0 });

      const after = await fitSetHistory(store, ref.id);
      expect(after).toHaveLength(before.length + 1);
      expect(after.at(-1)!.asOf).toEqual({ [SOURCE]: { seq: 2, label: "2026-05-01" } });
      const afterFits = await fitsOfSet(store, after.at(-1)!.id);
      expect(afterFits.map((f) => f.economy)).toEqual([...data.economies]);
      for (const f of afterFits) {
        const old = beforeFits.get(f.economy)!;
        const changed = f.economy === data.revised || f.economy === data.extended;
        // A carried fit keeps its input hash and its numbers; a refitted one has new inputs.
        expect(f.dataHash === old.dataHash, f.economy).toBe(!changed);
        if (!changed) expect({ gStar: f.gStar, theta: f.theta, nobs: f.nobs }).toEqual({ gStar: old.gStar, theta: old.theta, nobs: old.nobs });
      }
      // The added year of researchers is the last of the window over which n (the growth of R) is
      // measured, so n moves; the regression sample does not grow (no TFP for the year after).
      expect(afterFits.find((f) => f.economy === data.extended)!.n).not.toBe(beforeFits.get(data.extended)!.n);
      expect(await halfWrittenFitSets(store)).toEqual([]);

      // The change feed of `reference`: exactly the two economies, each with its reasons.
      const feed = await changeFeed(store, { spec: "reference" });
      expect(feed.map((f) => f.economy).sort()).toEqual([data.revised, data.extended].sort());
      const rev = feed.find((f) => f.economy === data.revised)!;
      expect(rev).toMatchObject({ fromLabel: `${SOURCE} 2026-02-01`, toLabel: `${SOURCE} 2026-05-01`, newYears: [] });
      expect(rev.revisedValues).toBeGreaterThan(0);
      expect(rev.reasons).toContain(`${rev.revisedValues} input values revised.`);
      expect(rev.reasons.some((x) => /^g\* moved (up|down) by \d+\.\d\d percentage points/.test(x))).toBe(true);
      // Only revisions: the whole move is the revision effect (the new-data effect is zero).
      expect(rev.revisionEffect! + rev.newDataEffect!).toBeCloseTo(rev.gStarTo! - rev.gStarFrom!, 12);
      expect(rev.newDataEffect).toBeCloseTo(0, 12);
      expect(rev.revisionEffect).not.toBe(0);
      const ext = feed.find((f) => f.economy === data.extended)!;
      expect(ext).toMatchObject({ newYears: [data.addedYear], revisedValues: 0, flagged: true });
      expect(ext.reasons).toContain(`New data for year ${data.addedYear}.`);
      expect(ext.reasons.some((x) => /^g\* moved (up|down) by/.test(x))).toBe(true);
      // Only new data: no revision effect.
      expect(ext.revisionEffect).toBeCloseTo(0, 12);
      expect(ext.newDataEffect).toBeCloseTo(ext.gStarTo! - ext.gStarFrom!, 12);

      // The panel spec lists every economy whose pooled estimate moved; the unchanged economies
      // carry no new years or revisions.
      const panelFeed = await changeFeed(store, { spec: "team-default" });
      for (const f of panelFeed.filter((x) => x.economy !== data.revised && x.economy !== data.extended)) {
        expect(f.newYears).toEqual([]);
        expect(f.revisedValues).toBe(0);
      }
      expect(panelFeed.find((f) => f.economy === data.extended)?.newYears).toEqual([data.addedYear]);
    });

    it("a run after the change finds nothing to do: no vintage, no fit set, no change rows", async () => {
      const before = await snapshot(store, SOURCE);
      const r = await runJob(store, job, { tick: tick("2026-05-02T06:00:00Z"), trigger: "schedule", instance: "it-cycle" });
      expect(r.outcome!.details).toMatchObject({ status: "not-modified" });
      expect((r.outcome!.details as { refit: { status: string }[] }).refit.map((o) => o.status)).toEqual(["unchanged", "unchanged"]);
      expect(await snapshot(store, SOURCE)).toEqual(before);
    });
  });
}
