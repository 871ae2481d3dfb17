/**
 * Vintage store speed and memory: a generated release of 1,000,000 observations (2,000 series x
 * 500 monthly periods; 500 invented economies in ISO 3166-1's user-assigned range XAA-XTF, four
 * measures) is stored as a new vintage through the real path (parse -> map -> validate ->
 * commitRelease), then a second release with 2% of the values revised. Both as SDMX-CSV and as
 * SDMX-JSON, on the embedded store (PGlite) and/or a PostgreSQL server.
 *
 * Printed per store and format (median of the runs; each run on a fresh database, each release
 * read and stored in its own child process, as `ideafront import` does, so peaks do not mix):
 * - prepare rate: observations per second through parse + map + validate (prepareRelease);
 * - store time of vintage 1 and vintage 2 (commitRelease: diff against the source's current state
 *   and insert of the new and changed values, one transaction);
 * - observation rows after each vintage (the second must add the revised 2% only);
 * - resident memory with the store open (before reading) and the peak of each release's process
 *   (process.resourceUsage().maxRSS). For the embedded store both include the database itself,
 *   which runs inside the process (opened from a copy of a migrated store, as a user's store is);
 *   a PostgreSQL server's own memory is not counted.
 *
 * Targets (issue 4): store a 1M vintage in under 30 s on PostgreSQL and under 60 s embedded.
 *
 * Run: npx tsx bench/store-vintage.ts [--store embedded|postgres|both] [--format sdmx-csv|sdmx-json|both]
 *        [--observations 1000000] [--runs 3] [--keep]
 * PostgreSQL: BENCH_DATABASE_URL (else TEST_DATABASE_URL, else postgresql://postgres@127.0.0.1:5432/postgres)
 * names a server where a database may be created; one is created per run and dropped afterwards.
 * The machine is shared: figures vary from run to run; read the median.
 */
import { spawn } from "node:child_process";
import { cpSync, createReadStream, createWriteStream, mkdtempSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import pg from "pg";
import { parseSourceDefinition } from "../lib/ingestion/sources";
import { prepareRelease } from "../lib/jobs/import-release";
import { openStore, type Store } from "../lib/store/db";
import { migrate } from "../lib/store/migrate";
import { commitRelease, upsertSource } from "../lib/store/vintages";

const SELF = fileURLToPath(import.meta.url);
const MEASURES = [
  { id: "RES_FTE", concept: "researchers_fte", unit: "FTE", base: 50_000 },
  { id: "POP", concept: "population", unit: "PS", base: 20_000_000 },
  { id: "TFP", concept: "tfp_index", unit: "IX", base: 1 },
  { id: "RD", concept: "rd_share_gdp", unit: "PC_GDP", base: 2 },
] as const;
const REVISED_SHARE = 0.02;

type StoreKind = "embedded" | "postgres";
type Format = "sdmx-csv" | "sdmx-json";

/** What one child process reports: one release read and stored. */
interface VintageFigures {
  prepareMs: number;
  storeMs: number;
  /** Observation rows in the store afterwards. */
  rows: number;
  added: number;
  revised: number;
  removed: number;
  /** Resident memory with the store open and migrated, before the release is read. */
  openRssMb: number;
  /** Peak resident memory of the process (process.resourceUsage().maxRSS). */
  maxRssMb: number;
}
interface RunResult {
  v1: VintageFigures;
  v2: VintageFigures;
}

function arg(name: string, fallback: string): string {
  const i = process.argv.indexOf(name);
  return i >= 0 ? process.argv[i + 1]! : fallback;
}

/** Deterministic pseudo-random numbers (32-bit xorshift), so every run stores the same values. */
function generator(seed: number): () => number {
  let x = seed >>> 0 || 1;
  return () => {
    x ^= x << 13;
    x >>>= 0;
    x ^= x >>> 17;
    x ^= x << 5;
    x >>>= 0;
    return x / 4294967296;
  };
}

/** Economy code number i in XAA, XAB, ... (ISO 3166-1 user-assigned range, invented economies). */
function economyCode(i: number): string {
  return `X${String.fromCharCode(65 + Math.floor(i / 26))}${String.fromCharCode(65 + (i % 26))}`;
}

function monthlyPeriod(t: number): string {
  return `${1980 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, "0")}`;
}

interface Shape {
  economies: number;
  periods: number;
}
function shapeFor(observations: number): Shape {
  const series = Math.max(MEASURES.length, Math.round(observations / 500 / MEASURES.length) * MEASURES.length);
  const economies = Math.min(26 * 26, series / MEASURES.length);
  return { economies, periods: Math.ceil(observations / (economies * MEASURES.length)) };
}

/**
 * The values of one release, in series order (economy-major, then measure, then period).
 * Release 2 revises every observation whose index is a multiple of 1/REVISED_SHARE (2%).
 */
function* values(shape: Shape, release: 1 | 2): Generator<{ economy: string; measure: (typeof MEASURES)[number]; period: string; value: string; status: string }> {
  const rand = generator(7);
  const every = Math.round(1 / REVISED_SHARE);
  let i = 0;
  for (let e = 0; e < shape.economies; e++) {
    for (const measure of MEASURES) {
      for (let t = 0; t < shape.periods; t++, i++) {
        let v = measure.base * (0.5 + rand());
        if (release === 2 && i % every === 0) v *= 1.01;
        yield { economy: economyCode(e), measure, period: monthlyPeriod(t), value: v.toPrecision(8), status: t % 11 === 0 ? "E" : "A" };
      }
    }
  }
}

async function write(stream: NodeJS.WritableStream, text: string): Promise<void> {
  if (!stream.write(text)) await new Promise<void>((resolve) => stream.once("drain", () => resolve()));
}
async function close(stream: NodeJS.WritableStream): Promise<void> {
  await new Promise<void>((resolve, reject) => {
    stream.on("error", reject);
    stream.end(() => resolve());
  });
}

/** SDMX-CSV 2.x: one row per observation. */
async function generateSdmxCsv(file: string, shape: Shape, release: 1 | 2): Promise<void> {
  const out = createWriteStream(file);
  await write(out, "STRUCTURE,STRUCTURE_ID,ACTION,FREQ,REF_AREA,MEASURE,TIME_PERIOD,OBS_VALUE,OBS_STATUS,UNIT_MEASURE\n");
  let buf = "";
  for (const o of values(shape, release)) {
    buf += `dataflow,BENCH:RESEARCH(1.0),I,M,${o.economy},${o.measure.id},${o.period},${o.value},${o.status},${o.measure.unit}\n`;
    if (buf.length > 1 << 16) {
      await write(out, buf);
      buf = "";
    }
  }
  await write(out, buf);
  await close(out);
}

/** SDMX-JSON 2.x data message, series layout (REF_AREA x MEASURE), UNIT_MEASURE as a series attribute. */
async function generateSdmxJson(file: string, shape: Shape, release: 1 | 2): Promise<void> {
  const out = createWriteStream(file);
  const structure = {
    links: [{ urn: "urn:sdmx:org.sdmx.infomodel.datastructure.Dataflow=BENCH:RESEARCH(1.0)", rel: "dataflow" }],
    name: "Generated research and productivity data (invented)",
    dimensions: {
      dataSet: [{ id: "FREQ", keyPosition: 0, values: [{ id: "M" }] }],
      series: [
        { id: "REF_AREA", keyPosition: 1, values: Array.from({ length: shape.economies }, (_, i) => ({ id: economyCode(i) })) },
        { id: "MEASURE", keyPosition: 2, values: MEASURES.map((m) => ({ id: m.id })) },
      ],
      observation: [{ id: "TIME_PERIOD", keyPosition: 3, roles: ["TIME_PERIOD"], values: Array.from({ length: shape.periods }, (_, t) => ({ id: monthlyPeriod(t) })) }],
    },
    attributes: {
      dataSet: [],
      series: [{ id: "UNIT_MEASURE", relationship: { dimensions: ["MEASURE"] }, values: MEASURES.map((m) => ({ id: m.unit })) }],
      observation: [{ id: "OBS_STATUS", relationship: { observation: {} }, values: [{ id: "A" }, { id: "E" }] }],
    },
    measures: { observation: [{ id: "OBS_VALUE" }] },
  };
  await write(out, `{"meta":{"id":"bench-${release}","prepared":"2026-0${release}-01T00:00:00Z","sender":{"id":"BENCH"}},"data":{"structures":[`);
  await write(out, JSON.stringify(structure));
  await write(out, `],"dataSets":[{"structure":0,"action":"Replace","series":{`);
  let t = 0;
  let first = true;
  let buf = "";
  for (const o of values(shape, release)) {
    if (t === 0) {
      const e = (o.economy.charCodeAt(1) - 65) * 26 + (o.economy.charCodeAt(2) - 65);
      const m = MEASURES.indexOf(o.measure);
      buf += `${first ? "" : "}},"}"${e}:${m}":{"attributes":[${m}],"observations":{`;
      first = false;
    }
    buf += `${t ? "," : ""}"${t}":[${o.value},${o.status === "E" ? 1 : 0}]`;
    t = (t + 1) % shape.periods;
    if (buf.length > 1 << 16) {
      await write(out, buf);
      buf = "";
    }
  }
  await write(out, `${buf}}}}}]}}`);
  await close(out);
}

function definition() {
  return parseSourceDefinition({
    name: "bench",
    title: "Generated release (invented)",
    kind: "file",
    format: "sdmx-csv",
    queries: MEASURES.map((m) => ({ id: m.id, concept: m.concept, unit: "{UNIT_MEASURE}", economyDimension: "REF_AREA", filters: { MEASURE: m.id } })),
  });
}

const DEFAULT_PG = "postgresql://postgres@127.0.0.1:5432/postgres";
function adminUrl(): string {
  return process.env.BENCH_DATABASE_URL ?? process.env.TEST_DATABASE_URL ?? DEFAULT_PG;
}

async function withAdmin<T>(fn: (c: pg.Client) => Promise<T>): Promise<T> {
  const c = new pg.Client({ connectionString: adminUrl() });
  await c.connect();
  try {
    return await fn(c);
  } finally {
    await c.end();
  }
}

/** Where one run's store lives: a data folder (embedded) or a database URL (postgres). */
interface RunStore {
  location: string;
  cleanup(): Promise<void>;
}

async function freshStore(kind: StoreKind, template: string, run: number): Promise<RunStore> {
  if (kind === "embedded") {
    // A copy of a migrated store, opened as a user's existing store is (creating one runs initdb,
    // whose memory would otherwise be counted in the peak).
    const dir = mkdtempSync(path.join(tmpdir(), "ideafront-bench-store-"));
    cpSync(template, dir, { recursive: true });
    return { location: dir, cleanup: async () => rmSync(dir, { recursive: true, force: true }) };
  }
  const name = `ideafront_bench_${process.pid}_${run}`;
  await withAdmin((c) => c.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`));
  await withAdmin((c) => c.query(`CREATE DATABASE "${name}"`));
  const u = new URL(adminUrl());
  u.pathname = `/${name}`;
  const drop = async () => {
    // A server restarted by someone else's test may still be starting: try for half a minute.
    for (let attempt = 1; ; attempt++) {
      try {
        return void (await withAdmin((c) => c.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`)));
      } catch (err) {
        if (attempt >= 15) throw err;
        await new Promise((r) => setTimeout(r, 2000));
      }
    }
  };
  return { location: u.toString(), cleanup: drop };
}

/**
 * Child process: open the store, read one release (parse -> map -> validate) and commit it as a
 * vintage, as `ideafront import` does; print one JSON line of figures.
 */
async function child(kind: StoreKind, format: Format, file: string, label: string, location: string, observations: number): Promise<void> {
  const store: Store = await openStore(kind === "embedded" ? { dataDir: location } : { databaseUrl: location });
  try {
    await migrate(store);
    const def = definition();
    await upsertSource(store, { name: def.name, title: def.title, kind: def.kind, format: def.format, config: def });
    const openRssMb = process.memoryUsage().rss / 1048576;
    const t0 = performance.now();
    const prepared = await prepareRelease(def, [{ body: createReadStream(file, { highWaterMark: 1 << 16 }), name: path.basename(file), format }]);
    const t1 = performance.now();
    const res = await commitRelease(store, {
      source: def.name,
      label,
      observations: prepared.observations,
      declaredEconomies: Array.from({ length: 26 * 26 }, (_, i) => economyCode(i)),
      notes: prepared.notes,
    });
    const t2 = performance.now();
    if (prepared.observations.length !== observations) throw new Error(`prepared ${prepared.observations.length} observations, expected ${observations}`);
    if (res.status !== "created") throw new Error(`the release was not stored (${res.status})`);
    const rows = Number((await store.sql.query<{ n: string }>(`SELECT count(*) AS n FROM observation`)).rows[0]!.n);
    const figures: VintageFigures = {
      prepareMs: t1 - t0,
      storeMs: t2 - t1,
      rows,
      added: res.counts.added,
      revised: res.counts.revised,
      removed: res.counts.removed,
      openRssMb,
      maxRssMb: process.resourceUsage().maxRSS / 1024,
    };
    process.stdout.write(`${JSON.stringify(figures)}\n`);
  } finally {
    await store.close();
  }
}

function runChild(args: string[]): Promise<VintageFigures> {
  return new Promise((resolve, reject) => {
    const p = spawn(process.execPath, [...process.execArgv, SELF, "--child", ...args], { stdio: ["ignore", "pipe", "inherit"] });
    let out = "";
    p.stdout.on("data", (d: Buffer) => (out += d.toString()));
    p.on("error", reject);
    p.on("close", (code) => {
      if (code !== 0) return reject(new Error(`child (${args.slice(0, 3).join(", ")}) exited with ${code}`));
      resolve(JSON.parse(out.trim().split("\n").pop()!) as VintageFigures);
    });
  });
}

/** One run: a fresh store, release 1 then release 2, each in its own process. */
async function runOnce(kind: StoreKind, format: Format, files: [string, string], observations: number, template: string, run: number): Promise<RunResult> {
  const where = await freshStore(kind, template, run);
  try {
    const v1 = await runChild([kind, format, files[0], "2026-01-01", where.location, String(observations)]);
    const v2 = await runChild([kind, format, files[1], "2026-02-01", where.location, String(observations)]);
    return { v1, v2 };
  } finally {
    await where.cleanup();
  }
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

const fmtS = (ms: number) => `${(ms / 1000).toFixed(1)} s`;
const fmtInt = (n: number) => Math.round(n).toLocaleString("en");

async function main(): Promise<void> {
  const c = process.argv.indexOf("--child");
  if (c >= 0) {
    const [kind, format, file, label, location, n] = process.argv.slice(c + 1);
    return child(kind as StoreKind, format as Format, file!, label!, location!, Number(n));
  }
  const which = arg("--store", "both");
  const stores: StoreKind[] = which === "both" ? ["postgres", "embedded"] : [which as StoreKind];
  const formatArg = arg("--format", "both");
  const formats: Format[] = formatArg === "both" ? ["sdmx-csv", "sdmx-json"] : [formatArg as Format];
  const observationsWanted = Number(arg("--observations", "1000000"));
  const runs = Number(arg("--runs", "3"));
  const shape = shapeFor(observationsWanted);
  const observations = shape.economies * MEASURES.length * shape.periods;

  const dir = mkdtempSync(path.join(tmpdir(), "ideafront-bench-vintage-"));
  const files: Record<Format, [string, string]> = {
    "sdmx-csv": [path.join(dir, "release-1.csv"), path.join(dir, "release-2.csv")],
    "sdmx-json": [path.join(dir, "release-1.json"), path.join(dir, "release-2.json")],
  };
  try {
    console.log(
      `Generating ${fmtInt(observations)} observations per release (${shape.economies * MEASURES.length} series x ${shape.periods} monthly periods; ` +
        `release 2 revises ${REVISED_SHARE * 100}%) in ${dir} ...`,
    );
    for (const f of formats) {
      for (const r of [1, 2] as const) await (f === "sdmx-csv" ? generateSdmxCsv : generateSdmxJson)(files[f][r - 1], shape, r);
    }
    const template = path.join(dir, "template");
    if (stores.includes("embedded")) {
      const t = await openStore({ dataDir: template });
      await migrate(t);
      await t.close();
    }
    console.log(`Node ${process.version}; ${runs} run(s) per store and format, each on a fresh database; each release is read and stored in its own process.`);
    if (stores.includes("postgres")) console.log(`PostgreSQL server: ${new URL(adminUrl()).host}`);
    console.log("");
    const header = [
      "store".padEnd(9),
      "format".padEnd(10),
      "file MB".padStart(8),
      "prepare obs/s".padStart(14),
      "store v1".padStart(9),
      "store v2".padStart(9),
      "rows after v1".padStart(14),
      "rows after v2".padStart(14),
      "v2 added/revised/removed".padStart(25),
      "RSS open MB".padStart(12),
      "peak v1/v2 MB".padStart(14),
      "  target",
    ];
    console.log(header.join(" "));
    for (const kind of stores) {
      for (const format of formats) {
        const results: RunResult[] = [];
        for (let r = 0, failures = 0; r < runs; r++) {
          try {
            results.push(await runOnce(kind, format, files[format], observations, template, r));
          } catch (err) {
            // The machine is shared: a server restart by someone else's test ends a run; try again.
            if (++failures > 2) throw err;
            console.log(`${"".padEnd(20)}run ${r + 1} failed (${(err as Error).message}); running it again`);
            r--;
          }
        }
        const prepareRate = median(results.flatMap((x) => [x.v1, x.v2].map((v) => (observations / v.prepareMs) * 1000)));
        const s1 = median(results.map((x) => x.v1.storeMs));
        const s2 = median(results.map((x) => x.v2.storeMs));
        const p1 = median(results.map((x) => x.v1.maxRssMb));
        const p2 = median(results.map((x) => x.v2.maxRssMb));
        const last = results[results.length - 1]!;
        const limit = kind === "postgres" ? 30_000 : 60_000;
        const met = Math.max(s1, s2) < limit;
        console.log(
          [
            kind.padEnd(9),
            format.padEnd(10),
            (statSync(files[format][0]).size / 1e6).toFixed(1).padStart(8),
            fmtInt(prepareRate).padStart(14),
            fmtS(s1).padStart(9),
            fmtS(s2).padStart(9),
            fmtInt(last.v1.rows).padStart(14),
            fmtInt(last.v2.rows).padStart(14),
            `${fmtInt(last.v2.added)}/${fmtInt(last.v2.revised)}/${fmtInt(last.v2.removed)}`.padStart(25),
            median(results.map((x) => x.v1.openRssMb)).toFixed(0).padStart(12),
            `${p1.toFixed(0)} / ${p2.toFixed(0)}`.padStart(14),
            `  ${met ? "met" : "MISSED"} (store < ${limit / 1000} s)`,
          ].join(" "),
        );
        if (runs > 1) {
          console.log(
            `${"".padEnd(20)}runs: store v1 ${results.map((x) => fmtS(x.v1.storeMs)).join(", ")}; store v2 ${results.map((x) => fmtS(x.v2.storeMs)).join(", ")}; peak RSS v1 ${results.map((x) => x.v1.maxRssMb.toFixed(0)).join(", ")} MB, v2 ${results.map((x) => x.v2.maxRssMb.toFixed(0)).join(", ")} MB`,
          );
        }
      }
    }
  } finally {
    if (!process.argv.includes("--keep")) rmSync(dir, { recursive: true, force: true });
  }
}

await main();
