/**
 * The migrated database matches schema.prisma: every model round-trips through the Prisma client,
 * on the embedded store and on a PostgreSQL server. Adding a model without a case here fails.
 */
import { afterAll, describe, expect, it } from "vitest";
import { Prisma } from "@/lib/store/generated/client";
import { listMigrations, migrate, migrationStatus } from "@/lib/store/migrate";
import type { Store } from "@/lib/store/db";
import { storeTargets } from "./support/stores";

type Case = (store: Store) => Promise<void>;

const when = new Date("2026-04-01T12:34:56.789Z");

const cases: Record<Prisma.ModelName, Case> = {
  Economy: async (s) => {
    const row = await s.prisma.economy.create({ data: { code: "XAA", name: "Aldoria (invented)", kind: "ECONOMY", isDemo: true } });
    expect(await s.prisma.economy.findUniqueOrThrow({ where: { code: "XAA" } })).toEqual(row);
    await s.prisma.economy.create({ data: { code: "WLD", name: "World", kind: "AGGREGATE" } });
    expect((await s.prisma.economy.findUniqueOrThrow({ where: { code: "WLD" } })).kind).toBe("AGGREGATE");
  },
  Source: async (s) => {
    const row = await s.prisma.source.create({
      data: { name: "rt-src", title: "Round trip", kind: "file", format: "csv", config: { nested: { list: [1, "two", null] } }, enabled: true, schedule: "0 5 * * 1", timezone: "Europe/Paris" },
    });
    const back = await s.prisma.source.findUniqueOrThrow({ where: { name: "rt-src" } });
    expect(back).toEqual(row);
    // JSON path filters work on both stores
    expect(await s.prisma.source.count({ where: { config: { path: ["nested", "list"], array_contains: ["two"] } } })).toBe(1);
  },
  Series: async (s) => {
    const src = await s.prisma.source.findUniqueOrThrow({ where: { name: "rt-src" } });
    const row = await s.prisma.series.create({
      data: { sourceId: src.id, economyCode: "XAA", concept: "researchers_fte", unit: "persons", seriesKey: "K.1", derivation: { formula: "a*b" } },
    });
    expect(await s.prisma.series.findUniqueOrThrow({ where: { id: row.id } })).toEqual(row);
  },
  Vintage: async (s) => {
    const src = await s.prisma.source.findUniqueOrThrow({ where: { name: "rt-src" } });
    const row = await s.prisma.vintage.create({
      data: { sourceId: src.id, seq: 1, label: "2026-04-01", releasedAt: when, fetchedAt: when, contentHash: "ab".repeat(32), observationCount: 3, addedCount: 3, notes: ["a note"], isDemo: false },
    });
    expect(await s.prisma.vintage.findUniqueOrThrow({ where: { id: row.id } })).toEqual(row);
  },
  Observation: async (s) => {
    const series = await s.prisma.series.findFirstOrThrow();
    const vintage = await s.prisma.vintage.findFirstOrThrow();
    const row = await s.prisma.observation.create({
      data: { seriesId: series.id, vintageId: vintage.id, vintageSeq: 1, period: "2019-Q3", year: 2019, value: 1234.5678901234567, status: "E" },
    });
    expect(typeof row.id).toBe("bigint");
    const back = await s.prisma.observation.findUniqueOrThrow({ where: { id: row.id } });
    expect(back).toEqual(row);
    expect(back.value).toBe(1234.5678901234567); // double precision survives exactly
    const removed = await s.prisma.observation.create({ data: { seriesId: series.id, vintageId: vintage.id, vintageSeq: 2, period: "2019-Q3", year: 2019, value: null, removed: true } });
    expect((await s.prisma.observation.findUniqueOrThrow({ where: { id: removed.id } })).removed).toBe(true);
  },
  ModelSpec: async (s) => {
    const row = await s.prisma.modelSpec.create({ data: { name: "rt-spec", description: "d", spec: { form: "log-linear" }, isDefault: true, builtin: true } });
    expect(await s.prisma.modelSpec.findUniqueOrThrow({ where: { name: "rt-spec" } })).toEqual(row);
  },
  JobRun: async (s) => {
    const row = await s.prisma.jobRun.create({
      data: { job: "fetch", tick: when, trigger: "manual", status: "succeeded", instance: "i1", finishedAt: when, heartbeatAt: when, counts: { fetched: 2 }, progress: { done: 1, total: 1 }, error: null, details: { x: 1 } },
    });
    expect(await s.prisma.jobRun.findUniqueOrThrow({ where: { id: row.id } })).toEqual(row);
    // (job, tick) is unique: the same scheduled tick cannot run twice
    await expect(s.prisma.jobRun.create({ data: { job: "fetch", tick: when, instance: "i2" } })).rejects.toThrow();
  },
  FitSet: async (s) => {
    const spec = await s.prisma.modelSpec.findUniqueOrThrow({ where: { name: "rt-spec" } });
    const run = await s.prisma.jobRun.findFirstOrThrow();
    const row = await s.prisma.fitSet.create({
      data: { specId: spec.id, asOf: { "rt-src": { seq: 1 } }, asOfLabel: "2026-04-01", dataHash: "h", codeVersion: "0.1.0", summary: { theta: 0.5 }, warnings: [], jobRunId: run.id },
    });
    expect(await s.prisma.fitSet.findUniqueOrThrow({ where: { id: row.id } })).toEqual(row);
  },
  Fit: async (s) => {
    const set = await s.prisma.fitSet.findFirstOrThrow();
    const row = await s.prisma.fit.create({
      data: { fitSetId: set.id, economyCode: "XAA", nobs: 30, gamma: 1, theta: 0.61, logB: -2.5, seGamma: null, seTheta: 0.07, n: 0.021, gStar: 0.0538, gStarLo: 0.03, gStarHi: 0.09, pThetaGe1: 0.002, regime: "converging", details: { years: [1990, 2019] }, warnings: ["w"], dataHash: "h" },
    });
    expect(await s.prisma.fit.findUniqueOrThrow({ where: { id: row.id } })).toEqual(row);
  },
  FitChange: async (s) => {
    const set = await s.prisma.fitSet.findFirstOrThrow();
    const spec = await s.prisma.modelSpec.findUniqueOrThrow({ where: { name: "rt-spec" } });
    const row = await s.prisma.fitChange.create({
      data: { specId: spec.id, economyCode: "XAA", fromFitSetId: null, toFitSetId: set.id, gStarFrom: 0.01, gStarTo: 0.012, gStarOldSample: 0.011, revisionEffect: 0.001, newDataEffect: 0.001, regimeFrom: "converging", regimeTo: "converging", intervalFrom: [0.005, 0.015], intervalTo: [0.006, null], newYears: [2025], revisedValues: 3, flagged: true, reasons: ["g* moved up"] },
    });
    expect(await s.prisma.fitChange.findUniqueOrThrow({ where: { id: row.id } })).toEqual(row);
  },
  User: async (s) => {
    const row = await s.prisma.user.create({ data: { email: "a@example.org", name: "A", passwordHash: "$argon2id$...", role: "EDITOR" } });
    expect(await s.prisma.user.findUniqueOrThrow({ where: { email: "a@example.org" } })).toEqual(row);
  },
  Session: async (s) => {
    const user = await s.prisma.user.findFirstOrThrow();
    const row = await s.prisma.session.create({ data: { id: "f".repeat(64), userId: user.id, expiresAt: when } });
    expect(await s.prisma.session.findUniqueOrThrow({ where: { id: row.id } })).toEqual(row);
  },
  Setting: async (s) => {
    const row = await s.prisma.setting.create({ data: { key: "k", value: { on: true, n: 3 } } });
    expect(await s.prisma.setting.findUniqueOrThrow({ where: { key: "k" } })).toEqual(row);
  },
};

for (const target of storeTargets()) {
  describe(`schema round trip on the ${target.kind} store`, () => {
    afterAll(() => target.cleanup());
    let store: Store;

    it("applies every migration and records it as Prisma does", async () => {
      store = await target.open();
      const status = await migrationStatus(store);
      const files = listMigrations();
      expect(status.pending).toEqual([]);
      expect(status.applied).toBe(files.length);
      expect(status.level).toBe(files[files.length - 1]!.name);
      // A second run is a no-op.
      expect((await migrate(store)).applied).toEqual([]);
      const rows = await store.sql.query<{ checksum: string }>(`SELECT checksum FROM "_prisma_migrations" ORDER BY migration_name`);
      expect(rows.rows.map((r) => r.checksum)).toEqual(files.map((f) => f.checksum));
    });

    it("has a round-trip case for every model in schema.prisma", () => {
      expect(Object.keys(cases).sort()).toEqual(Object.values(Prisma.ModelName).sort());
    });

    // Order matters: later cases use rows of earlier ones.
    for (const model of ["Economy", "Source", "Series", "Vintage", "Observation", "ModelSpec", "JobRun", "FitSet", "Fit", "FitChange", "User", "Session", "Setting"] as const) {
      it(`round-trips ${model}`, async () => {
        await cases[model](store);
      });
    }

    it("closes cleanly", async () => {
      await store.close();
    });
  });
}
