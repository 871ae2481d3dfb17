/**
 * Helpers for the scheduled-pipeline tests (pipeline-*.test.ts): real series served by the fake
 * agency, a source definition pointing at it, a snapshot of what the store holds for a source
 * (to prove a failed run left nothing behind), and worker processes of the compiled command line.
 *
 * The served values are real published data from ../shared/data (World Bank WDI vintages and
 * Penn World Table 10.01); only which years of which vintage each fake release carries is chosen
 * here. Tests that need them skip with a message when the folder is absent.
 */
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { parse } from "csv-parse/sync";
import pg from "pg";
import type { Store } from "@/lib/store/db";
import { upsertSource } from "@/lib/store/vintages";
import { parseSourceDefinition, type SourceDefinitionInput } from "@/lib/ingestion/sources";
import type { FakeAgency, FakeObservation } from "@/test/fixtures/fake-agency";

export const root = path.resolve(import.meta.dirname, "..", "..", "..");
export const sharedData = path.resolve(root, "..", "shared", "data");
export const haveSharedData = fs.existsSync(path.join(sharedData, "wdi")) && fs.existsSync(path.join(sharedData, "pwt"));

// ---------------------------------------------------------------------------------------------
// Real series

type WdiRow = { "Country Code": string; Year: string; Value: string };

/** One WDI indicator as published at `vintage`: economy -> year -> value. */
function readWdi(indicator: string, vintage: string): Map<string, Map<number, number>> {
  const rows = parse(fs.readFileSync(path.join(sharedData, "wdi", indicator, `${vintage}.csv`)), { columns: true, bom: true }) as WdiRow[];
  const out = new Map<string, Map<number, number>>();
  for (const r of rows) {
    if (r.Value === "") continue;
    const m = out.get(r["Country Code"]) ?? new Map<number, number>();
    m.set(Number(r.Year), Number(r.Value));
    out.set(r["Country Code"], m);
  }
  return out;
}

/** PWT 10.01 rtfpna: economy -> year -> value. */
function readPwtTfp(): Map<string, Map<number, number>> {
  const rows = parse(fs.readFileSync(path.join(sharedData, "pwt", "pwt10.01-growth-subset.csv")), { columns: true }) as { isocode: string; year: string; rtfpna: string }[];
  const out = new Map<string, Map<number, number>>();
  for (const r of rows) {
    if (r.rtfpna === "") continue;
    const m = out.get(r.isocode) ?? new Map<number, number>();
    m.set(Number(r.year), Number(r.rtfpna));
    out.set(r.isocode, m);
  }
  return out;
}

/** SDMX MEASURE codes of the fake flow for the three model inputs. */
export const MEASURES = { researchersPerMillion: "RDP6", population: "POP", tfp: "TFP" } as const;

export interface PanelReleases {
  economies: readonly string[];
  /** Economy whose researcher values are revised in release 2 (WDI 2018-08-01 -> 2025-12-17 values, same years). */
  revised: string;
  /** Economy that gains a year in release 2 (WDI 2025-12-17, one more year). */
  extended: string;
  addedYear: number;
  release1: FakeObservation[];
  release2: FakeObservation[];
}

/**
 * Two releases of a researchers / population / TFP flow for four economies, built from real data:
 * - researchers per million: World Bank WDI SP.POP.SCIE.RD.P6, vintage 2025-12-17, 1996-2019;
 *   KOR in release 1 from vintage 2018-08-01 (1996-2015), in release 2 the same years from
 *   vintage 2025-12-17 (a real revision); USA ends at 2018 in release 1 and at 2019 in release 2;
 * - population: WDI SP.POP.TOTL, vintage 2026-04-01, 1995-2019;
 * - TFP: Penn World Table 10.01 rtfpna, 1995-2019.
 */
export function panelReleases(): PanelReleases {
  const rd2018 = readWdi("sp.pop.scie.rd.p6", "2018-08-01");
  const rd2025 = readWdi("sp.pop.scie.rd.p6", "2025-12-17");
  const pop = readWdi("sp.pop.totl", "2026-04-01");
  const tfp = readPwtTfp();
  const economies = ["KOR", "POL", "SVK", "USA"] as const;
  const revised = "KOR", extended = "USA", addedYear = 2019;
  const rows = (measure: string, unit: string, economy: string, values: Map<number, number> | undefined, from: number, to: number): FakeObservation[] => {
    const out: FakeObservation[] = [];
    for (let y = from; y <= to; y++) {
      const v = values?.get(y);
      if (v !== undefined) out.push({ series: measure, unit, economy, period: String(y), value: v });
    }
    return out;
  };
  const build = (n: 1 | 2): FakeObservation[] => {
    const out: FakeObservation[] = [];
    for (const e of economies) {
      if (e === revised) out.push(...rows(MEASURES.researchersPerMillion, "PER_MILLION", e, (n === 1 ? rd2018 : rd2025).get(e), 1996, 2015));
      else if (e === extended) out.push(...rows(MEASURES.researchersPerMillion, "PER_MILLION", e, rd2025.get(e), 1996, n === 1 ? addedYear - 1 : addedYear));
      else out.push(...rows(MEASURES.researchersPerMillion, "PER_MILLION", e, rd2025.get(e), 1996, 2019));
      out.push(...rows(MEASURES.population, "PS", e, pop.get(e), 1995, 2019));
      out.push(...rows(MEASURES.tfp, "IX", e, tfp.get(e), 1995, 2019));
    }
    return out;
  };
  return { economies, revised, extended, addedYear, release1: build(1), release2: build(2) };
}

// ---------------------------------------------------------------------------------------------
// Sources

/** An SDMX-JSON source on the fake agency's flow TEST,DF_RD,1.0 with the three model inputs. */
export function panelSourceInput(agency: FakeAgency, name: string, overrides: Partial<SourceDefinitionInput> = {}): SourceDefinitionInput {
  return {
    name,
    title: `Fake agency flow (${name})`,
    kind: "sdmx",
    format: "sdmx-json",
    baseUrl: agency.urls.sdmx,
    urlTemplate: "{base}/data/{agency},{flow},{version}/{key}",
    params: { agency: "TEST", flow: "DF_RD", version: "1.0" },
    timeoutMs: 10_000,
    retries: 1,
    queries: [
      { key: `A..${MEASURES.researchersPerMillion}`, concept: "researchers_per_million", unit: "per million people" },
      { key: `A..${MEASURES.population}`, concept: "population", unit: "persons" },
      { key: `A..${MEASURES.tfp}`, concept: "tfp_index", unit: "index (2017 = 1)" },
    ],
    ...overrides,
  };
}

/** A one-query SDMX-JSON source (population only), for drills that need a second, independent source. */
export function populationSourceInput(agency: FakeAgency, name: string, overrides: Partial<SourceDefinitionInput> = {}): SourceDefinitionInput {
  return panelSourceInput(agency, name, { queries: [{ key: `A..${MEASURES.population}`, concept: "population", unit: "persons" }], ...overrides });
}

/** Store a source definition (validated) with its schedule, enabled unless said otherwise. */
export async function addSource(store: Store, input: SourceDefinitionInput, opts: { enabled?: boolean; schedule?: string } = {}): Promise<void> {
  const def = parseSourceDefinition({ ...input, enabled: opts.enabled ?? true, schedule: opts.schedule ?? input.schedule ?? "0 6 * * *" });
  await upsertSource(store, { name: def.name, title: def.title, kind: def.kind, format: def.format, config: def, enabled: def.enabled, schedule: def.schedule, timezone: def.timezone });
  // upsertSource keeps enabled/schedule of an existing row: set them explicitly.
  await store.prisma.source.update({ where: { name: def.name }, data: { enabled: def.enabled, schedule: def.schedule, timezone: def.timezone } });
}

/** Model inputs read from one source (researchers = per million x population / 1e6). */
export function panelInputs(source: string) {
  return {
    researchers: { perMillion: { source, concept: "researchers_per_million" }, population: { source, concept: "population" } },
    tfp: { source, concept: "tfp_index" },
    population: { source, concept: "population" },
  };
}

// ---------------------------------------------------------------------------------------------
// What the store holds

export interface SourceSnapshot {
  vintages: number;
  latestSeq: number | null;
  observations: number;
  /** Readable "as of" latest: count of current values. */
  current: number;
  fitSets: number;
  fits: number;
  fitChanges: number;
}

/** Counts of what the store holds for one source (and of all fit sets, which read every input). */
export async function snapshot(store: Store, source: string): Promise<SourceSnapshot> {
  const one = async (sql: string, params: unknown[] = []) => Number((await store.sql.query<{ n: number | string | null }>(sql, params)).rows[0]?.n ?? 0);
  const latest = (await store.sql.query<{ seq: number }>(`SELECT max(v.seq) AS seq FROM vintage v JOIN source s ON s.id = v.source_id WHERE s.name = $1`, [source])).rows[0]?.seq ?? null;
  return {
    vintages: await one(`SELECT count(*) AS n FROM vintage v JOIN source s ON s.id = v.source_id WHERE s.name = $1`, [source]),
    latestSeq: latest === null ? null : Number(latest),
    observations: await one(`SELECT count(*) AS n FROM observation o JOIN series x ON x.id = o.series_id JOIN source s ON s.id = x.source_id WHERE s.name = $1`, [source]),
    current: await one(
      `SELECT count(*) AS n FROM (SELECT DISTINCT ON (o.series_id, o.period) o.removed FROM observation o JOIN series x ON x.id = o.series_id JOIN source s ON s.id = x.source_id
        WHERE s.name = $1 ORDER BY o.series_id, o.period, o.vintage_seq DESC) t WHERE NOT removed`,
      [source],
    ),
    fitSets: await one(`SELECT count(*) AS n FROM fit_set`),
    fits: await one(`SELECT count(*) AS n FROM fit`),
    fitChanges: await one(`SELECT count(*) AS n FROM fit_change`),
  };
}

/** Fit sets whose fit count differs from their economies' count in the summary (a half-written set). */
export async function halfWrittenFitSets(store: Store): Promise<number[]> {
  const r = await store.sql.query<{ id: number }>(
    `SELECT fs.id FROM fit_set fs LEFT JOIN fit f ON f.fit_set_id = fs.id
      GROUP BY fs.id, fs.summary HAVING count(f.id) <> COALESCE((fs.summary->>'economies')::int, -1)`,
  );
  return r.rows.map((x) => x.id);
}

export interface RunLogRow {
  id: number;
  job: string;
  tick: Date;
  status: string;
  instance: string;
  started_at: Date;
  finished_at: Date | null;
  error: string | null;
  counts: Record<string, number> | null;
}

export async function runLog(store: Store, job?: string): Promise<RunLogRow[]> {
  const r = await store.sql.query<RunLogRow>(
    `SELECT id, job, tick, status, instance, started_at, finished_at, error, counts FROM job_run ${job ? "WHERE job = $1" : ""} ORDER BY id`,
    job ? [job] : [],
  );
  return r.rows;
}

// ---------------------------------------------------------------------------------------------
// Waiting and PostgreSQL helpers

/** Poll `check` until it returns a value other than undefined/false; throws after `timeoutMs` (a safety net). */
export async function waitFor<T>(what: string, check: () => Promise<T | undefined | false | null>, timeoutMs = 60_000, everyMs = 100): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const v = await check().catch(() => undefined);
    if (v !== undefined && v !== false && v !== null) return v as T;
    if (Date.now() > until) throw new Error(`Timed out after ${timeoutMs} ms waiting for ${what}.`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}

/**
 * Hold `LOCK TABLE <table> IN SHARE MODE` in its own transaction on `url`: reads go on, but any
 * INSERT into the table waits, so a run can be stopped in the middle of its commit transaction.
 */
export async function holdInsertLock(url: string, table: string): Promise<{ release(): Promise<void>; client: pg.Client }> {
  const client = new pg.Client({ connectionString: url });
  client.on("error", () => {}); // the server may be restarted under it (drill)
  await client.connect();
  await client.query("BEGIN");
  await client.query(`LOCK TABLE ${table} IN SHARE MODE`);
  return {
    client,
    async release() {
      await client.query("ROLLBACK").catch(() => {});
      await client.end().catch(() => {});
    },
  };
}

/** Backend pids of sessions of database `db` waiting for a lock while inserting into `table`. */
export async function waitingInserts(adminUrl: string, db: string, table: string): Promise<number[]> {
  const c = new pg.Client({ connectionString: adminUrl });
  await c.connect();
  try {
    const r = await c.query<{ pid: number }>(
      `SELECT pid FROM pg_stat_activity WHERE datname = $1 AND wait_event_type = 'Lock' AND query ILIKE $2`,
      [db, `%INSERT INTO ${table}%`],
    );
    return r.rows.map((x) => x.pid);
  } finally {
    await c.end();
  }
}

/** Whether the server session with backend pid `pid` still exists. */
export async function sessionAlive(adminUrl: string, pid: number): Promise<boolean> {
  const c = new pg.Client({ connectionString: adminUrl });
  await c.connect();
  try {
    return (await c.query(`SELECT 1 FROM pg_stat_activity WHERE pid = $1`, [pid])).rows.length > 0;
  } finally {
    await c.end();
  }
}

export function databaseName(url: string): string {
  return decodeURIComponent(new URL(url).pathname.slice(1));
}

/**
 * Restart the local PostgreSQL cluster (fast shutdown: sessions are terminated, open
 * transactions rolled back) and wait until it answers. Everyone's sessions on the server are cut,
 * so keep it to the one drill that needs it, and brief; the server is started again whatever
 * happens.
 */
export async function restartPostgres(adminUrl: string): Promise<void> {
  const version = fs.readdirSync("/etc/postgresql")[0] ?? "15";
  const ctl = (...args: string[]) => spawnSync("pg_ctlcluster", ["--skip-systemctl-redirect", version, "main", ...args], { encoding: "utf8", timeout: 60_000 });
  const r = ctl("restart", "-m", "fast");
  if (r.status !== 0) {
    ctl("start");
    throw new Error(`pg_ctlcluster restart failed: ${(r.stderr || r.stdout).trim()}`);
  }
  await waitFor("PostgreSQL to accept connections again", async () => {
    const c = new pg.Client({ connectionString: adminUrl });
    c.on("error", () => {});
    await c.connect();
    await c.end();
    return true;
  }, 60_000, 200);
}

/**
 * An outage of one database, for `ms`: new connections to it are refused (ALLOW_CONNECTIONS
 * false) and its sessions are terminated, as a server restart would, without touching the other
 * databases on the server. Returns when connections are allowed again.
 */
export async function cutOffDatabase(adminUrl: string, db: string, ms: number): Promise<void> {
  const c = new pg.Client({ connectionString: adminUrl });
  await c.connect();
  try {
    await c.query(`ALTER DATABASE "${db}" WITH ALLOW_CONNECTIONS false`);
    try {
      await c.query(`SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = $1 AND pid <> pg_backend_pid()`, [db]);
      await new Promise((r) => setTimeout(r, ms));
    } finally {
      await c.query(`ALTER DATABASE "${db}" WITH ALLOW_CONNECTIONS true`);
    }
  } finally {
    await c.end();
  }
}

// ---------------------------------------------------------------------------------------------
// The compiled command line

const cliEntry = path.join(root, "bin", "ideafront.mjs");

/** Compile lib/cli into dist/cli.mjs (what `npm install` does); returns an error sentence or null. */
export function buildCli(): string | null {
  const b = spawnSync(process.execPath, [path.join(root, "scripts", "build-cli.mjs")], { cwd: root, encoding: "utf8", timeout: 180_000 });
  return b.status === 0 ? null : `node scripts/build-cli.mjs failed: ${(b.stderr || b.stdout).split("\n").find((l) => l.trim()) ?? b.status}`;
}

export interface CliProcess {
  child: ChildProcess;
  instance: string;
  /** stdout and stderr so far. */
  output(): string;
  /** Resolves with the exit code (or the signal name) once the process has ended. */
  exited: Promise<number | string>;
}

/** Start `ideafront <args>` with the given environment (in a scratch folder, so no config file is picked up). */
export function startCli(args: string[], env: Record<string, string>, instance: string): CliProcess {
  const cwd = fs.mkdtempSync(path.join(os.tmpdir(), "ideafront-cli-"));
  const child = spawn(process.execPath, [cliEntry, ...args], {
    cwd,
    env: { PATH: process.env.PATH ?? "", HOME: os.tmpdir(), IDEAFRONT_DEMO: "off", IDEAFRONT_INSTANCE: instance, ...env } as unknown as NodeJS.ProcessEnv,
    stdio: ["ignore", "pipe", "pipe"],
  });
  let out = "";
  child.stdout!.on("data", (d) => (out += String(d)));
  child.stderr!.on("data", (d) => (out += String(d)));
  const exited = new Promise<number | string>((resolve) => child.once("exit", (code, signal) => resolve(code ?? signal ?? -1)));
  return { child, instance, output: () => out, exited };
}
