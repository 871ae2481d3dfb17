/**
 * The app's own migration runner. It applies prisma/migrations/<timestamp>_<name>/migration.sql in
 * order, each in one transaction, and records them in Prisma's `_prisma_migrations` table with the
 * same sha256 checksums, so `prisma migrate deploy` agrees where the native engine is available.
 * A Postgres advisory lock (the key Prisma's own migrate uses) keeps concurrent starts apart.
 */
import { createHash, randomUUID } from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import type { SqlConnection, Store } from "./db";

export interface MigrationFile {
  name: string;
  sql: string;
  checksum: string;
}

export interface MigrationStatus {
  /** Name of the newest applied migration, or null on an empty database. */
  level: string | null;
  applied: number;
  pending: string[];
}

/** The advisory lock key Prisma Migrate takes (so both never run at once). */
const MIGRATION_LOCK_KEY = 72707369;

/** Migrations shipped with this version, in order. */
export function listMigrations(dir = path.join(process.cwd(), "prisma", "migrations")): MigrationFile[] {
  // The app runs from the project folder (`next start`), so the migrations are read in place.
  if (!fs.existsSync(/*turbopackIgnore: true*/ dir)) return [];
  return fs
    .readdirSync(/*turbopackIgnore: true*/ dir, { withFileTypes: true })
    .filter((d) => d.isDirectory() && /^\d{14}_[a-z0-9_]+$/.test(d.name))
    .map((d) => d.name)
    .sort()
    .map((name) => {
      const sql = fs.readFileSync(/*turbopackIgnore: true*/ path.join(dir, name, "migration.sql"), "utf8");
      return { name, sql, checksum: createHash("sha256").update(sql).digest("hex") };
    });
}

const CREATE_TABLE = `CREATE TABLE IF NOT EXISTS "_prisma_migrations" (
    "id" VARCHAR(36) PRIMARY KEY NOT NULL,
    "checksum" VARCHAR(64) NOT NULL,
    "finished_at" TIMESTAMPTZ,
    "migration_name" VARCHAR(255) NOT NULL,
    "logs" TEXT,
    "rolled_back_at" TIMESTAMPTZ,
    "started_at" TIMESTAMPTZ NOT NULL DEFAULT now(),
    "applied_steps_count" INTEGER NOT NULL DEFAULT 0
)`;

interface AppliedRow {
  migration_name: string;
  checksum: string;
  finished_at: Date | null;
}

async function readApplied(conn: SqlConnection): Promise<AppliedRow[]> {
  const exists = await conn.query<{ t: string | null }>(`SELECT to_regclass('"_prisma_migrations"')::text AS t`);
  if (!exists.rows[0]?.t) return [];
  const r = await conn.query<AppliedRow>(
    `SELECT migration_name, checksum, finished_at FROM "_prisma_migrations" WHERE rolled_back_at IS NULL ORDER BY migration_name`,
  );
  return r.rows;
}

/** Where the database stands against the migrations of this version. */
export async function migrationStatus(store: Store, files = listMigrations()): Promise<MigrationStatus> {
  const applied = await readApplied(store.sql);
  const done = new Set(applied.filter((a) => a.finished_at).map((a) => a.migration_name));
  return {
    level: applied.length ? applied[applied.length - 1]!.migration_name : null,
    applied: done.size,
    pending: files.filter((f) => !done.has(f.name)).map((f) => f.name),
  };
}

export class MigrationError extends Error {
  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = "MigrationError";
  }
}

/**
 * Apply every pending migration. Throws MigrationError when an applied migration's file changed
 * since (checksum mismatch), when a previous attempt failed half-way, or when a migration fails.
 */
export async function migrate(store: Store, files = listMigrations()): Promise<{ applied: string[]; status: MigrationStatus }> {
  const appliedNow: string[] = [];
  await store.withConnection(async (conn) => {
    if (store.kind === "postgres") await conn.query("SELECT pg_advisory_lock($1)", [MIGRATION_LOCK_KEY]);
    try {
      await conn.exec(CREATE_TABLE);
      const applied = await readApplied(conn);
      const byName = new Map(applied.map((a) => [a.migration_name, a]));
      for (const a of applied) {
        if (!a.finished_at) {
          throw new MigrationError(
            `Migration ${a.migration_name} failed during an earlier attempt; repair the database and remove its row from _prisma_migrations.`,
          );
        }
        const file = files.find((f) => f.name === a.migration_name);
        if (file && file.checksum !== a.checksum) {
          throw new MigrationError(`Migration ${a.migration_name} was edited after it was applied (checksum differs).`);
        }
      }
      for (const file of files) {
        if (byName.has(file.name)) continue;
        try {
          await store.transaction(async (tx) => {
            await tx.exec(file.sql);
            await tx.query(
              `INSERT INTO "_prisma_migrations" (id, checksum, finished_at, migration_name, applied_steps_count, started_at) VALUES ($1, $2, now(), $3, 1, now())`,
              [randomUUID(), file.checksum, file.name],
            );
          });
        } catch (err) {
          throw new MigrationError(`Migration ${file.name} failed: ${(err as Error).message}`, { cause: err });
        }
        appliedNow.push(file.name);
      }
    } finally {
      if (store.kind === "postgres") await conn.query("SELECT pg_advisory_unlock($1)", [MIGRATION_LOCK_KEY]).catch(() => {});
    }
  });
  return { applied: appliedNow, status: await migrationStatus(store, files) };
}
