/**
 * The stores every integration test runs against: the embedded PGlite store (always) and a
 * PostgreSQL server when TEST_DATABASE_URL is set. Each test file gets a fresh database: a new
 * folder for PGlite, a new database on the server (dropped afterwards).
 *
 * Without TEST_DATABASE_URL the Postgres half is skipped with a message; CI sets
 * IDEAFRONT_REQUIRE_ALL_SUITES=1, which turns that skip into a failure.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { openStore, type Store } from "@/lib/store/db";
import { listMigrations, migrate } from "@/lib/store/migrate";
import { createHash } from "node:crypto";

export interface StoreTarget {
  kind: "embedded" | "postgres";
  /** Opens a fresh, migrated store. */
  open(): Promise<Store>;
  /** Opens the last store again (after closing it), as a restart would. */
  reopen(): Promise<Store>;
  /** Connection settings of the last opened store (for child processes). */
  env(): Record<string, string>;
  /** Removes what open() created. */
  cleanup(): Promise<void>;
}

const requireAll = process.env.IDEAFRONT_REQUIRE_ALL_SUITES === "1";
export const postgresUrl = process.env.TEST_DATABASE_URL;

if (!postgresUrl) {
  const msg = "TEST_DATABASE_URL is not set: the PostgreSQL half of the integration suite is skipped (CI sets it).";
  if (requireAll) throw new Error(`${msg} IDEAFRONT_REQUIRE_ALL_SUITES=1 forbids skipping.`);
  console.warn(`[skip] ${msg}`);
}

/**
 * Creating a PGlite database takes seconds; copy a migrated template made once per set of
 * migrations instead.
 */
async function migratedTemplate(): Promise<string> {
  const hash = createHash("sha256").update(listMigrations().map((m) => m.checksum).join()).digest("hex").slice(0, 16);
  const dir = path.join(os.tmpdir(), `ideafront-template-${hash}`);
  if (fs.existsSync(path.join(dir, "pglite", "PG_VERSION"))) return path.join(dir, "pglite");
  const building = fs.mkdtempSync(path.join(os.tmpdir(), "ideafront-template-build-"));
  const store = await openStore({ dataDir: building });
  await migrate(store);
  await store.close();
  fs.rmSync(dir, { recursive: true, force: true });
  fs.renameSync(building, dir);
  return path.join(dir, "pglite");
}

function embeddedTarget(): StoreTarget {
  const dirs: string[] = [];
  let last = "";
  return {
    kind: "embedded",
    async open() {
      last = fs.mkdtempSync(path.join(os.tmpdir(), "ideafront-it-"));
      dirs.push(last);
      fs.cpSync(await migratedTemplate(), path.join(last, "pglite"), { recursive: true });
      const store = await openStore({ dataDir: last });
      await migrate(store);
      return store;
    },
    async reopen() {
      const store = await openStore({ dataDir: last });
      await migrate(store);
      return store;
    },
    env: () => ({ IDEAFRONT_DATA: last }),
    async cleanup() {
      for (const d of dirs) fs.rmSync(d, { recursive: true, force: true });
    },
  };
}

function postgresTarget(adminUrl: string): StoreTarget {
  const created: string[] = [];
  let lastUrl = "";
  const withAdmin = async (fn: (c: pg.Client) => Promise<void>) => {
    const c = new pg.Client({ connectionString: adminUrl });
    await c.connect();
    try {
      await fn(c);
    } finally {
      await c.end();
    }
  };
  return {
    kind: "postgres",
    async open() {
      const name = `ideafront_it_${process.pid}_${Date.now().toString(36)}_${created.length}`;
      await withAdmin((c) => c.query(`CREATE DATABASE "${name}"`).then(() => {}));
      created.push(name);
      const u = new URL(adminUrl);
      u.pathname = `/${name}`;
      lastUrl = u.toString();
      const store = await openStore({ databaseUrl: lastUrl });
      await migrate(store);
      return store;
    },
    async reopen() {
      const store = await openStore({ databaseUrl: lastUrl });
      await migrate(store);
      return store;
    },
    env: () => ({ DATABASE_URL: lastUrl }),
    async cleanup() {
      await withAdmin(async (c) => {
        for (const name of created) await c.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
      });
    },
  };
}

/** The stores to run against: embedded always, postgres when configured. */
export function storeTargets(): StoreTarget[] {
  return postgresUrl ? [embeddedTarget(), postgresTarget(postgresUrl)] : [embeddedTarget()];
}
