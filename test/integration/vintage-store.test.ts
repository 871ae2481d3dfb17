/**
 * The vintage store on real releases: the World Bank researcher vintages in shared/data are
 * committed in date order; the revisions the store reports between consecutive vintages must equal
 * counts computed here independently from the raw files, and reading "as of" any vintage must give
 * back exactly that file's values.
 */
import fs from "node:fs";
import path from "node:path";
import { parse } from "csv-parse/sync";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Store } from "@/lib/store/db";
import type { MappedObservation } from "@/lib/ingestion/types";
import { commitRelease, listVintages, readAsOf, revisionsBetween, upsertSource } from "@/lib/store/vintages";
import { storeTargets } from "./support/stores";

const wdiDir = path.resolve("../shared/data/wdi/sp.pop.scie.rd.p6");
const haveData = fs.existsSync(wdiDir);
if (!haveData) console.warn(`[skip] ${wdiDir} is absent: the real-release vintage tests are skipped (CI has it).`);

type Row = { "Country Name": string; "Country Code": string; Year: string; Value: string };
function readVintage(label: string): { rows: Row[]; obs: MappedObservation[]; values: Map<string, number> } {
  const rows = parse(fs.readFileSync(path.join(wdiDir, `${label}.csv`)), { columns: true, bom: true }) as Row[];
  const values = new Map<string, number>();
  const obs: MappedObservation[] = [];
  for (const r of rows) {
    if (r.Value === "") continue;
    values.set(`${r["Country Code"]}|${r.Year}`, Number(r.Value));
    obs.push({ economy: r["Country Code"], concept: "researchers_per_million", unit: "per million people", seriesKey: "SP.POP.SCIE.RD.P6", period: r.Year, value: Number(r.Value) });
  }
  return { rows, obs, values };
}

/** Revisions between two raw files, computed without the store. */
function expectedCounts(a: Map<string, number>, b: Map<string, number>) {
  let added = 0, revised = 0, removed = 0;
  for (const [k, v] of b) if (!a.has(k)) added++; else if (a.get(k) !== v) revised++;
  for (const k of a.keys()) if (!b.has(k)) removed++;
  return { added, revised, removed };
}

const labels = ["2018-08-01", "2025-12-17", "2026-04-01"]; // World Bank WDI SP.POP.SCIE.RD.P6 vintages (shared/data/wdi)

for (const target of storeTargets()) {
  describe.skipIf(!haveData)(`vintage store on World Bank releases (${target.kind})`, () => {
    let store: Store;
    const files = haveData ? labels.map(readVintage) : [];
    beforeAll(async () => {
      store = await target.open();
      await upsertSource(store, { name: "wdi-rd", title: "World Bank WDI researchers", kind: "file", format: "csv", config: {} });
    });
    afterAll(async () => {
      await store?.close();
      await target.cleanup();
    });

    it("commits each release in date order with counts that match the raw files", async () => {
      for (let i = 0; i < labels.length; i++) {
        const names = Object.fromEntries(files[i]!.rows.map((r) => [r["Country Code"], r["Country Name"]]));
        const res = await commitRelease(store, { source: "wdi-rd", label: labels[i]!, observations: files[i]!.obs, economyNames: names });
        expect(res.status).toBe("created");
        expect(res.vintage.seq).toBe(i + 1);
        const exp = i === 0 ? { added: files[0]!.values.size, revised: 0, removed: 0 } : expectedCounts(files[i - 1]!.values, files[i]!.values);
        // World Bank WDI SP.POP.SCIE.RD.P6, vintages 2018-08-01 / 2025-12-17 / 2026-04-01: counts from the raw files
        expect({ added: res.counts.added, revised: res.counts.revised, removed: res.counts.removed }).toEqual(exp);
        console.log(`[wdi ${target.kind}] ${labels[i]}: added=${exp.added} revised=${exp.revised} removed=${exp.removed}`);
      }
    });

    it("lists the revisions between consecutive vintages, with old and new values", async () => {
      for (let i = 1; i < labels.length; i++) {
        const revs = await revisionsBetween(store, { source: "wdi-rd", fromSeq: i, toSeq: i + 1 });
        const exp = expectedCounts(files[i - 1]!.values, files[i]!.values);
        const got = { added: 0, revised: 0, removed: 0 };
        for (const r of revs) got[r.kind]++;
        expect(got).toEqual(exp); // World Bank WDI SP.POP.SCIE.RD.P6, raw-file counts
        for (const r of revs.filter((x) => x.kind === "revised").slice(0, 50)) {
          expect(r.oldValue).toBe(files[i - 1]!.values.get(`${r.economy}|${r.period}`));
          expect(r.newValue).toBe(files[i]!.values.get(`${r.economy}|${r.period}`));
        }
      }
      // Across two steps: the net change from the first to the last vintage.
      const net = await revisionsBetween(store, { source: "wdi-rd", fromSeq: 1, toSeq: 3 });
      const exp = expectedCounts(files[0]!.values, files[2]!.values);
      expect(net.filter((r) => r.kind === "added").length).toBe(exp.added);
      expect(net.filter((r) => r.kind === "revised").length).toBe(exp.revised);
      expect(net.filter((r) => r.kind === "removed").length).toBe(exp.removed);
    });

    it("reads every vintage back exactly as published", async () => {
      for (let i = 0; i < labels.length; i++) {
        const rows = await readAsOf(store, { source: "wdi-rd", asOfSeq: i + 1 });
        const got = new Map(rows.map((r) => [`${r.economy}|${r.period}`, r.value]));
        expect(got).toEqual(files[i]!.values); // World Bank WDI SP.POP.SCIE.RD.P6 vintage file, value for value
      }
    });

    it("stores only new and changed values", async () => {
      const vintages = await listVintages(store, "wdi-rd");
      const stored = await store.sql.query<{ n: number; seq: number }>(
        `SELECT o.vintage_seq AS seq, count(*)::int AS n FROM observation o JOIN series s ON s.id = o.series_id JOIN source src ON src.id = s.source_id WHERE src.name = 'wdi-rd' GROUP BY 1 ORDER BY 1`,
      );
      for (const v of vintages) {
        const n = stored.rows.find((r) => r.seq === v.seq)?.n ?? 0;
        expect(n).toBe(v.addedCount + v.revisedCount + v.removedCount);
      }
    });

    it("creates nothing when the same release is imported again", async () => {
      const before = await store.sql.query<{ n: number }>(`SELECT count(*)::int AS n FROM observation`);
      const res = await commitRelease(store, { source: "wdi-rd", label: "2026-04-01-again", observations: files[2]!.obs });
      expect(res.status).toBe("unchanged");
      expect(res.vintage.label).toBe("2026-04-01");
      expect((await listVintages(store, "wdi-rd")).length).toBe(3);
      const after = await store.sql.query<{ n: number }>(`SELECT count(*)::int AS n FROM observation`);
      expect(after.rows[0]!.n).toBe(before.rows[0]!.n);
    });

    it("keeps aggregates apart from economies", async () => {
      const wld = await store.prisma.economy.findUniqueOrThrow({ where: { code: "WLD" } });
      expect(wld.kind).toBe("AGGREGATE"); // World Bank aggregate "World"
      const deu = await store.prisma.economy.findUniqueOrThrow({ where: { code: "DEU" } });
      expect(deu).toMatchObject({ kind: "ECONOMY", name: "Germany" });
    });
  });

  describe(`vintage store atomicity and rules (${target.kind})`, () => {
    let store: Store;
    beforeAll(async () => {
      store = await target.open();
      await upsertSource(store, { name: "t", title: "t", kind: "file", format: "csv", config: {} });
    });
    afterAll(async () => {
      await store?.close();
    });
    const o = (economy: string, period: string, value: number | null, unit = "persons"): MappedObservation => ({ economy, concept: "researchers_fte", unit, seriesKey: "k", period, value });

    it("writes nothing when a release fails half-way", async () => {
      await commitRelease(store, { source: "t", label: "2020-01-01", observations: [o("DEU", "2018", 1), o("DEU", "2019", 2)] });
      const count = async () => (await store.sql.query<{ n: number }>(`SELECT (SELECT count(*) FROM observation) + (SELECT count(*) FROM vintage) + (SELECT count(*) FROM series) AS n`)).rows[0]!.n;
      const before = Number(await count());
      // Duplicate slot: rejected before any write.
      await expect(commitRelease(store, { source: "t", label: "2020-02-01", observations: [o("FRA", "2018", 1), o("FRA", "2018", 2)] })).rejects.toThrow(/FRA researchers_fte \(persons\) for period 2018 twice/);
      // A label the source already used, with other content.
      await expect(commitRelease(store, { source: "t", label: "2020-01-01", observations: [o("FRA", "2018", 1)] })).rejects.toThrow(/already has a vintage labelled "2020-01-01"/);
      // Out of order.
      await expect(commitRelease(store, { source: "t", label: "2019-06-01", observations: [o("ITA", "2018", 1)] })).rejects.toThrow(/must arrive in order/);
      expect(Number(await count())).toBe(before);
      expect(await store.prisma.economy.findUnique({ where: { code: "FRA" } })).toBeNull();
    });

    it("marks removed periods and reads around them", async () => {
      const r = await commitRelease(store, { source: "t", label: "2020-03-01", observations: [o("DEU", "2018", 1.5)] });
      expect(r.counts).toMatchObject({ added: 0, revised: 1, removed: 1 });
      expect((await readAsOf(store, { source: "t" })).map((x) => [x.period, x.value])).toEqual([["2018", 1.5]]);
      expect((await readAsOf(store, { source: "t", asOfSeq: 1 })).map((x) => [x.period, x.value])).toEqual([["2018", 1], ["2019", 2]]);
      // A period that comes back after removal counts as added.
      const back = await commitRelease(store, { source: "t", label: "2020-04-01", observations: [o("DEU", "2018", 1.5), o("DEU", "2019", 2)] });
      expect(back.counts).toMatchObject({ added: 1, revised: 0, removed: 0 });
    });

    it("flags a unit change instead of mixing units", async () => {
      const r = await commitRelease(store, { source: "t", label: "2020-05-01", observations: [o("DEU", "2018", 1500, "thousand persons"), o("DEU", "2019", 2000, "thousand persons")] });
      expect(r.warnings.join()).toMatch(/Unit change for DEU researchers_fte: was "persons", now "thousand persons"/);
      const now = await readAsOf(store, { source: "t" });
      expect(new Set(now.map((x) => x.unit))).toEqual(new Set(["thousand persons"]));
    });

    it("a release equal to an older (not the latest) vintage is a new vintage", async () => {
      const r = await commitRelease(store, { source: "t", label: "2020-06-01", observations: [o("DEU", "2018", 1.5)] });
      expect(r.status).toBe("created");
    });
  });
}
