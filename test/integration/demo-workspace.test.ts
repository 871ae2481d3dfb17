/**
 * The invented demo workspace enters through the same import path as real data, shows what it
 * promises (revisions, added years, a new economy, a rebase flagged as a unit change, a series
 * break), and survives a restart without being imported twice.
 */
import { afterAll, describe, expect, it } from "vitest";
import { ensureDemoWorkspace } from "@/lib/jobs/demo";
import { demoReleaseRows, DEMO_SOURCE, DEMO_VINTAGE_COUNT } from "@/lib/demo/scenario";
import { listVintages, readAsOf, revisionsBetween } from "@/lib/store/vintages";
import { demoState } from "@/lib/store/workspace";
import { verifyLogin } from "@/lib/store/users";
import { storeTargets } from "./support/stores";

for (const target of storeTargets()) {
  describe(`demo workspace (${target.kind})`, () => {
    afterAll(() => target.cleanup());

    it("loads every release through ingestion and keeps it across a restart", async () => {
      let store = await target.open();
      const first = await ensureDemoWorkspace(store, { password: "test-password-1" });
      expect(first.imported).toHaveLength(DEMO_VINTAGE_COUNT);
      const vintages = await listVintages(store, DEMO_SOURCE);
      expect(vintages.map((v) => v.seq)).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);

      // The store reads each release back exactly as the demo office published it.
      for (const i of [0, 4, 7]) {
        const rows = demoReleaseRows(i);
        const stored = await readAsOf(store, { source: DEMO_SOURCE, asOfSeq: i + 1 });
        expect(stored.length).toBe(rows.length);
        const want = new Map(rows.map((r) => [`${r.REF_AREA}|${r.MEASURE}|${r.TIME_PERIOD}`, r.OBS_VALUE]));
        const measure: Record<string, string> = { researchers_fte: "RES_FTE", population: "POP", tfp_index: "TFP" };
        for (const s of stored) expect(s.value).toBe(want.get(`${s.economy}|${measure[s.concept]}|${s.period}`));
      }

      // The rebase is flagged as a unit change; the break shows as revisions of old years.
      expect(vintages[4]!.notes.join(" ")).toMatch(/Unit change for XAL tfp_index: was "index, 2015=100", now "index, 2020=100"/);
      const brk = await revisionsBetween(store, { source: DEMO_SOURCE, fromSeq: 6, toSeq: 7, concepts: ["researchers_fte"] });
      expect(brk.filter((r) => r.economy === "XDR" && r.kind === "revised" && Number(r.period) < 2010).length).toBe(2009 - 1996 + 1);

      expect(await demoState(store)).toMatchObject({ loaded: true, vintages: DEMO_VINTAGE_COUNT });
      expect(await verifyLogin(store, "editor@demo.ideafront.test", "test-password-1")).toMatchObject({ role: "EDITOR" });
      const economies = await store.prisma.economy.findMany({ where: { isDemo: true } });
      expect(economies.length).toBe(16);
      await store.close();

      store = await target.reopen();
      const again = await ensureDemoWorkspace(store, { password: "test-password-1" });
      expect(again.imported).toEqual([]);
      expect((await listVintages(store, DEMO_SOURCE)).length).toBe(DEMO_VINTAGE_COUNT);
      await store.close();
    });
  });
}
