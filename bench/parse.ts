/**
 * Parser speed and memory: SDMX-JSON and SDMX-CSV, 1,000,000 observations each, read as streams
 * from files. Prints observations per second (median of 3 runs) and the peak resident memory
 * (process.resourceUsage().maxRSS, the high-water mark) of each run's own child process, so the
 * peaks of the two formats and of the generator do not mix.
 *
 * Targets (issue 4): at least 200,000 observations/s and a peak below 300 MB per format.
 * A third row times csv-parse alone on the SDMX-CSV file (records only, no observations): the
 * ceiling the SDMX-CSV parser works under, since all CSV goes through csv-parse.
 *
 * Run: npx tsx bench/parse.ts [--observations 1000000] [--runs 3] [--keep]
 * The machine is shared: figures vary from run to run; read the median.
 */
import { spawn } from "node:child_process";
import { createReadStream, createWriteStream, mkdtempSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { parse as csvParse } from "csv-parse";
import { parseSdmxCsvStream } from "../lib/ingestion/sdmx-csv";
import { parseSdmxJsonStream } from "../lib/ingestion/sdmx-json";

const SELF = fileURLToPath(import.meta.url);
const PERIODS = 100; // annual periods per series: 1920..2019

type Format = "sdmx-json" | "sdmx-csv" | "csv-parse-only";

interface RunResult {
  format: Format;
  observations: number;
  ms: number;
  maxRssMb: number;
}

function arg(name: string, fallback: number): number {
  const i = process.argv.indexOf(name);
  return i >= 0 ? Number(process.argv[i + 1]) : fallback;
}

/** Deterministic pseudo-random values (a 32-bit xorshift), so every run reads the same bytes. */
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

async function write(stream: NodeJS.WritableStream, text: string): Promise<void> {
  if (!stream.write(text)) await new Promise<void>((resolve) => stream.once("drain", () => resolve()));
}

async function close(stream: NodeJS.WritableStream): Promise<void> {
  await new Promise<void>((resolve, reject) => {
    stream.on("error", reject);
    stream.end(() => resolve());
  });
}

/** An SDMX-JSON 2.1 data message: series layout, REF_AREA x MEASURE series, TIME_PERIOD at observation level, OBS_STATUS per observation. */
async function generateSdmxJson(file: string, observations: number): Promise<void> {
  const series = Math.ceil(observations / PERIODS);
  const rand = generator(42);
  const out = createWriteStream(file);
  const areas = Array.from({ length: series }, (_, i) => ({ id: `X${String(i).padStart(6, "0")}`, name: `Economy ${i}` }));
  const times = Array.from({ length: PERIODS }, (_, i) => ({ id: String(1920 + i) }));
  const structure = {
    links: [{ urn: "urn:sdmx:org.sdmx.infomodel.datastructure.Dataflow=BENCH:RESEARCHERS(1.0)", rel: "dataflow" }],
    name: "Generated researchers data",
    dimensions: {
      dataSet: [{ id: "FREQ", keyPosition: 0, values: [{ id: "A" }] }],
      series: [
        { id: "REF_AREA", keyPosition: 1, values: areas },
        { id: "MEASURE", keyPosition: 2, values: [{ id: "FTE" }] },
      ],
      observation: [{ id: "TIME_PERIOD", keyPosition: 3, roles: ["TIME_PERIOD"], values: times }],
    },
    attributes: {
      dataSet: [{ id: "UNIT_MEASURE", relationship: { dataflow: {} }, values: [{ id: "PS" }] }],
      series: [],
      observation: [{ id: "OBS_STATUS", relationship: { observation: {} }, values: [{ id: "A" }, { id: "E" }, { id: "P" }] }],
    },
    measures: { observation: [{ id: "OBS_VALUE" }] },
  };
  await write(out, `{"$schema":"https://json.sdmx.org/2.1/sdmx-json-data-schema.json","meta":{"id":"bench","prepared":"2024-01-01T00:00:00Z","sender":{"id":"BENCH"}},"data":{"structures":[`);
  await write(out, JSON.stringify(structure));
  await write(out, `],"dataSets":[{"structure":0,"action":"Replace","attributes":[0],"series":{`);
  let left = observations;
  for (let s = 0; s < series && left > 0; s++) {
    const n = Math.min(PERIODS, left);
    left -= n;
    let obs = "";
    for (let t = 0; t < n; t++) obs += `${t ? "," : ""}"${t}":[${(rand() * 10000).toFixed(3)},${t % 7 === 0 ? 1 : 0}]`;
    await write(out, `${s ? "," : ""}"${s}:0":{"attributes":[],"observations":{${obs}}}`);
  }
  await write(out, "}}]}}");
  await close(out);
}

/** An SDMX-CSV 2.x file with the same content. */
async function generateSdmxCsv(file: string, observations: number): Promise<void> {
  const series = Math.ceil(observations / PERIODS);
  const rand = generator(42);
  const out = createWriteStream(file);
  await write(out, "STRUCTURE,STRUCTURE_ID,ACTION,FREQ,REF_AREA,MEASURE,TIME_PERIOD,OBS_VALUE,OBS_STATUS,UNIT_MEASURE\n");
  let left = observations;
  for (let s = 0; s < series && left > 0; s++) {
    const n = Math.min(PERIODS, left);
    left -= n;
    const area = `X${String(s).padStart(6, "0")}`;
    let rows = "";
    for (let t = 0; t < n; t++) rows += `dataflow,BENCH:RESEARCHERS(1.0),R,A,${area},FTE,${1920 + t},${(rand() * 10000).toFixed(3)},${t % 7 === 0 ? "E" : "A"},PS\n`;
    await write(out, rows);
  }
  await close(out);
}

/** Child process: parse one file once, print one JSON line. */
async function child(format: Format, file: string): Promise<void> {
  const input = createReadStream(file, { highWaterMark: 1 << 16 });
  let count = 0;
  let checksum = 0;
  const sink = (o: { value: number | null }): void => {
    count++;
    if (o.value !== null) checksum += o.value;
  };
  const start = process.hrtime.bigint();
  if (format === "csv-parse-only") {
    // Reference: csv-parse turning the same bytes into records, nothing else.
    const core = (csvParse({ relax_column_count: true, skip_empty_lines: true }) as unknown as { api: { parse(b: Buffer | undefined, end: boolean, push: (r: string[]) => void, close: () => void): Error | undefined } }).api;
    let records = -1; // minus the header
    const push = (): void => void records++;
    for await (const chunk of input) core.parse(chunk as Buffer, false, push, () => {});
    core.parse(undefined, true, push, () => {});
    const ms = Number(process.hrtime.bigint() - start) / 1e6;
    process.stdout.write(`${JSON.stringify({ format, observations: records, ms, maxRssMb: process.resourceUsage().maxRSS / 1024 })}\n`);
    return;
  }
  const summary =
    format === "sdmx-json" ? await parseSdmxJsonStream(input, { mode: "strict" }, sink) : await parseSdmxCsvStream(input, { mode: "strict", attributes: ["OBS_STATUS", "UNIT_MEASURE"] }, sink);
  const ms = Number(process.hrtime.bigint() - start) / 1e6;
  if (summary.counts.observations !== count || !Number.isFinite(checksum)) throw new Error("count mismatch");
  const result: RunResult = { format, observations: count, ms, maxRssMb: process.resourceUsage().maxRSS / 1024 };
  process.stdout.write(`${JSON.stringify(result)}\n`);
}

function runChild(format: Format, file: string): Promise<RunResult> {
  return new Promise((resolve, reject) => {
    const p = spawn(process.execPath, [...process.execArgv, SELF, "--child", format, file], { stdio: ["ignore", "pipe", "inherit"] });
    let out = "";
    p.stdout.on("data", (d: Buffer) => (out += d.toString()));
    p.on("error", reject);
    p.on("close", (code) => {
      if (code !== 0) return reject(new Error(`child for ${format} exited with ${code}`));
      resolve(JSON.parse(out.trim().split("\n").pop()!) as RunResult);
    });
  });
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

async function main(): Promise<void> {
  const i = process.argv.indexOf("--child");
  if (i >= 0) return child(process.argv[i + 1] as Format, process.argv[i + 2]!);
  const observations = arg("--observations", 1_000_000);
  const runs = arg("--runs", 3);
  const dir = mkdtempSync(path.join(tmpdir(), "ideafront-bench-"));
  const files = { "sdmx-json": path.join(dir, "data.json"), "sdmx-csv": path.join(dir, "data.csv") };
  try {
    console.log(`Generating ${observations.toLocaleString("en")} observations per format in ${dir} ...`);
    await generateSdmxJson(files["sdmx-json"], observations);
    await generateSdmxCsv(files["sdmx-csv"], observations);
    console.log(`Node ${process.version}; ${runs} runs per format, each in a fresh child process.\n`);
    console.log("format      file MB   obs/s (median)   min..max obs/s         peak RSS MB (max of runs)   target");
    for (const format of ["sdmx-json", "sdmx-csv", "csv-parse-only"] as const) {
      const results: RunResult[] = [];
      const file = format === "csv-parse-only" ? files["sdmx-csv"] : files[format];
      for (let r = 0; r < runs; r++) results.push(await runChild(format, file));
      const rates = results.map((x) => (x.observations / x.ms) * 1000);
      const peak = Math.max(...results.map((x) => x.maxRssMb));
      const ok = median(rates) >= 200_000 && peak < 300;
      const mb = statSync(file).size / 1e6;
      console.log(
        `${format.padEnd(10)} ${mb.toFixed(1).padStart(8)}   ${Math.round(median(rates)).toLocaleString("en").padStart(14)}   ${Math.round(Math.min(...rates)).toLocaleString("en")}..${Math.round(Math.max(...rates)).toLocaleString("en")}`.padEnd(71) +
          `${peak.toFixed(0).padStart(6)}                   ${format === "csv-parse-only" ? "(reference: the CSV tokenizer alone, no target)" : `${ok ? "met" : "MISSED"} (>= 200,000 obs/s, < 300 MB)`}`,
      );
    }
  } finally {
    if (!process.argv.includes("--keep")) rmSync(dir, { recursive: true, force: true });
  }
}

await main();
