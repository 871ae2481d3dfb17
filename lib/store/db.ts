/**
 * Opening the store: a PostgreSQL server when DATABASE_URL is set, else the embedded PGlite
 * database in IDEAFRONT_DATA. Both speak through the same Prisma client and the same raw SQL
 * interface, with the same schema and migrations.
 *
 * This folder (lib/store) is the only place that imports the Prisma client.
 */
import fs from "node:fs";
import path from "node:path";
import pg from "pg";
import { PGlite } from "@electric-sql/pglite";
import { PrismaPGlite } from "pglite-prisma-adapter";
import { PrismaPg } from "@prisma/adapter-pg";
import { PrismaClient } from "./generated/client";
import { ConfigError, redactUrl } from "../config";

export type StoreKind = "embedded" | "postgres";

/** The subset of a driver connection used for raw SQL (pg PoolClient, PGlite and its transactions). */
export interface SqlConnection {
  query<R = Record<string, unknown>>(text: string, params?: unknown[]): Promise<{ rows: R[] }>;
  /** Runs a script of several statements (no parameters). */
  exec(text: string): Promise<void>;
}

export interface Store {
  readonly kind: StoreKind;
  readonly prisma: PrismaClient;
  /** Where the data lives: the data folder, or the server URL without its password. */
  readonly location: string;
  /** Raw SQL outside a transaction. */
  readonly sql: SqlConnection;
  /** Runs fn in one database transaction on one connection: all of it commits, or none. */
  transaction<T>(fn: (tx: SqlConnection) => Promise<T>): Promise<T>;
  /** Runs fn while holding a session-level connection (for advisory locks); released afterwards. */
  withConnection<T>(fn: (conn: SqlConnection) => Promise<T>): Promise<T>;
  close(): Promise<void>;
}

export interface OpenOptions {
  databaseUrl?: string;
  /** Folder of the embedded store (its database goes into <dataDir>/pglite). */
  dataDir?: string;
  /** Seconds to wait for a server connection before giving up. */
  connectTimeoutSeconds?: number;
}

/** Open the store named by the options; throws ConfigError with one sentence on bad settings. */
export async function openStore(opts: OpenOptions): Promise<Store> {
  if (opts.databaseUrl) return openPostgres(opts.databaseUrl, opts.connectTimeoutSeconds ?? 5);
  if (!opts.dataDir) throw new ConfigError("IDEAFRONT_DATA", "No data folder given for the embedded store.");
  return openEmbedded(opts.dataDir);
}

async function openPostgres(url: string, timeoutSeconds: number): Promise<Store> {
  const pool = new pg.Pool({ connectionString: url, connectionTimeoutMillis: timeoutSeconds * 1000, max: 10 });
  // Idle clients can lose their server (restart); report, never crash the process.
  pool.on("error", (err) => console.error(`[store] idle PostgreSQL connection failed: ${err.message}`));
  try {
    const c = await pool.connect();
    c.release();
  } catch (err) {
    await pool.end().catch(() => {});
    throw new ConfigError(
      "DATABASE_URL",
      `Cannot connect to the PostgreSQL server in DATABASE_URL (${redactUrl(url)}): ${describeConnectError(err)}.`,
    );
  }
  const prisma = new PrismaClient({ adapter: new PrismaPg(pool) });
  const asConn = (c: pg.PoolClient | pg.Pool): SqlConnection => ({
    query: async (text, params) => {
      const r = await c.query(text, params as unknown[]);
      return { rows: r.rows };
    },
    exec: async (text) => {
      await c.query(text);
    },
  });
  return {
    kind: "postgres",
    prisma,
    location: redactUrl(url),
    sql: asConn(pool),
    async transaction(fn) {
      const client = await pool.connect();
      const broken = watchCheckedOut(client);
      try {
        await client.query("BEGIN");
        const result = await fn(asConn(client));
        await client.query("COMMIT");
        return result;
      } catch (err) {
        await client.query("ROLLBACK").catch(() => {});
        throw err;
      } finally {
        client.release(broken());
      }
    },
    async withConnection(fn) {
      const client = await pool.connect();
      const broken = watchCheckedOut(client);
      try {
        return await fn(asConn(client));
      } finally {
        client.release(broken());
      }
    },
    async close() {
      await prisma.$disconnect().catch(() => {});
      await pool.end().catch(() => {});
    },
  };
}

/**
 * A checked-out client whose server goes away (restart, crash) emits "error" besides failing the
 * query in progress; the pool listens only to idle clients, and an unheard "error" ends the
 * process. Listen while the client is out; the returned function stops listening and gives the
 * error, if any, to pass to release() so the pool drops the broken client.
 */
function watchCheckedOut(client: pg.PoolClient): () => Error | undefined {
  let failure: Error | undefined;
  const onError = (err: Error) => {
    failure = err;
  };
  client.on("error", onError);
  return () => {
    client.off("error", onError);
    return failure;
  };
}

function describeConnectError(err: unknown): string {
  const e = err as { code?: string; message?: string };
  switch (e?.code) {
    case "ECONNREFUSED":
      return "the connection was refused (is the server running, and on that host and port?)";
    case "ENOTFOUND":
    case "EAI_AGAIN":
      return "the host name could not be resolved";
    case "ETIMEDOUT":
      return "the connection timed out";
    case "3D000":
      return "that database does not exist";
    case "28P01":
    case "28000":
      return "the server refused the user name or password";
    default:
      return (e?.message ?? String(err)).replace(/\s+/g, " ").replace(/\.$/, "");
  }
}

/** Process-wide registry of open embedded databases: Next evaluates modules once per bundle. */
const embeddedByFolder: Map<string, Promise<Store>> = ((globalThis as Record<string, unknown>).__ideafrontEmbedded ??=
  new Map()) as Map<string, Promise<Store>>;

async function openEmbedded(dataDir: string): Promise<Store> {
  const folder = path.resolve(dataDir);
  const existing = embeddedByFolder.get(folder);
  if (existing) return existing;
  const opening = openEmbeddedOnce(folder);
  embeddedByFolder.set(folder, opening);
  opening.catch(() => embeddedByFolder.delete(folder));
  return opening;
}

async function openEmbeddedOnce(folder: string): Promise<Store> {
  ensureWritableFolder(folder);
  const lock = takeFolderLock(folder);
  const dbDir = path.join(folder, "pglite");
  let pglite: PGlite;
  try {
    pglite = await PGlite.create(dbDir);
  } catch (err) {
    lock.release();
    throw new ConfigError(
      "IDEAFRONT_DATA",
      `Cannot open the embedded store in ${dbDir}: ${(err as Error).message ?? String(err)}.`,
    );
  }
  const prisma = new PrismaClient({ adapter: new PrismaPGlite(pglite) });
  const asConn = (c: { query: PGlite["query"]; exec: PGlite["exec"] }): SqlConnection => ({
    query: async (text, params) => {
      const r = await c.query(text, params as unknown[]);
      return { rows: r.rows as never[] };
    },
    exec: async (text) => {
      await c.exec(text);
    },
  });
  let closed = false;
  const store: Store = {
    kind: "embedded",
    prisma,
    location: folder,
    sql: asConn(pglite),
    transaction: (fn) => pglite.transaction((tx) => fn(asConn(tx))),
    // PGlite is one connection: session-level locks are trivially held.
    withConnection: (fn) => fn(asConn(pglite)),
    async close() {
      if (closed) return;
      closed = true;
      embeddedByFolder.delete(folder);
      await prisma.$disconnect().catch(() => {});
      await pglite.close().catch(() => {});
      lock.release();
    },
  };
  return store;
}

function ensureWritableFolder(folder: string): void {
  try {
    fs.mkdirSync(folder, { recursive: true });
    const probe = path.join(folder, `.write-test-${process.pid}`);
    fs.writeFileSync(probe, "ok");
    fs.rmSync(probe);
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    const why =
      code === "EACCES" || code === "EPERM"
        ? "permission denied"
        : code === "EROFS"
          ? "the file system is read-only"
          : code === "ENOTDIR" || code === "EEXIST"
            ? "a file with that name is in the way"
            : ((err as Error).message ?? String(err));
    throw new ConfigError("IDEAFRONT_DATA", `The data folder in IDEAFRONT_DATA (${folder}) is not writable: ${why}.`);
  }
}

/**
 * The embedded database must be opened by one process at a time. A lock file holds the owner's
 * pid; a lock left by a process that no longer runs is taken over.
 */
function takeFolderLock(folder: string): { release(): void } {
  const file = path.join(folder, "store.lock");
  for (let attempt = 0; attempt < 2; attempt++) {
    try {
      fs.writeFileSync(file, String(process.pid), { flag: "wx" });
      let released = false;
      const release = () => {
        if (released) return;
        released = true;
        try {
          if (fs.readFileSync(file, "utf8") === String(process.pid)) fs.rmSync(file);
        } catch {
          /* already gone */
        }
      };
      process.once("exit", release);
      return { release };
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== "EEXIST") throw err;
      const owner = Number(fs.readFileSync(file, "utf8").trim());
      if (Number.isInteger(owner) && owner > 0 && owner !== process.pid && processIsAlive(owner)) {
        throw new ConfigError(
          "IDEAFRONT_DATA",
          `The embedded store in ${folder} is in use by process ${owner} (a running server or command); stop it, use another IDEAFRONT_DATA folder, or set DATABASE_URL to share a PostgreSQL server.`,
        );
      }
      fs.rmSync(file, { force: true });
    }
  }
  throw new ConfigError("IDEAFRONT_DATA", `Could not take the lock file ${file}.`);
}

function processIsAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === "EPERM";
  }
}
