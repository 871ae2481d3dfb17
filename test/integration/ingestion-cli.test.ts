/**
 * The command line on real releases, as a user runs it: the compiled `ideafront` (dist/cli.mjs,
 * built here from the current source) in a child process, on a fresh embedded store
 * (IDEAFRONT_DATA) and, when TEST_DATABASE_URL is set, on a fresh PostgreSQL database
 * (DATABASE_URL).
 *
 * - World Bank WDI SP.POP.SCIE.RD.P6 vintages imported in date order; `revisions` between
 *   consecutive vintages prints `added=N revised=N removed=N` equal to counts computed here from
 *   the raw files, and its CSV lists every changed value with the old and new value of the files.
 * - The same file again creates no vintage.
 * - Bad input (a missing column, a non-numeric value, an unknown --concept) exits non-zero with one
 *   message naming the code and the place, and the store is unchanged.
 * - The OECD legacy MSTI download (byte-order mark, "Flag Codes" column): its aggregates EU28 and
 *   OECD are refused with one message per code, or left out with --skip-unknown-economies; what is
 *   stored is checked value by value against the file, flags included.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { parse } from "csv-parse/sync";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Store } from "@/lib/store/db";
import { listVintages, readAsOf } from "@/lib/store/vintages";
import { storeTargets, type StoreTarget } from "./support/stores";

const root = path.resolve(import.meta.dirname, "../..");
const data = path.resolve(root, "../shared/data");
const wdiDir = path.join(data, "wdi/sp.pop.scie.rd.p6");
const oecdFile = path.join(data, "oecd-legacy/oecd_global_researchers.csv");
const haveData = fs.existsSync(wdiDir) && fs.existsSync(oecdFile);
if (!haveData) console.warn(`[skip] ${wdiDir} or ${oecdFile} is absent: the command-line tests on real releases are skipped (CI has ../shared/data).`);

const malformedDir = path.join(root, "test/fixtures/malformed");
const manifest = JSON.parse(fs.readFileSync(path.join(malformedDir, "manifest.json"), "utf8")) as {
  entries: { file: string; expect: { code: string; location: { line?: number; column?: number; field?: string } } }[];
};

const WDI_LABELS = ["2018-08-01", "2025-12-17", "2026-04-01"]; // World Bank WDI SP.POP.SCIE.RD.P6 vintages in ../shared/data/wdi
const WDI_MAP = "economy=Country Code,period=Year,value=Value";

type WdiRow = { "Country Name": string; "Country Code": string; Year: string; Value: string };
/** economy|year -> value of one raw WDI file (rows without a value are not observations). */
function wdiValues(label: string): Map<string, number> {
  const rows = parse(fs.readFileSync(path.join(wdiDir, `${label}.csv`)), { columns: true, bom: true }) as WdiRow[];
  const out = new Map<string, number>();
  for (const r of rows) if (r.Value !== "") out.set(`${r["Country Code"]}|${r.Year}`, Number(r.Value));
  return out;
}

/** Revisions between two raw files, computed without the store. */
function expectedCounts(a: Map<string, number>, b: Map<string, number>) {
  let added = 0;
  let revised = 0;
  let removed = 0;
  for (const [k, v] of b) {
    if (!a.has(k)) added++;
    else if (a.get(k) !== v) revised++;
  }
  for (const k of a.keys()) if (!b.has(k)) removed++;
  return { added, revised, removed };
}

function lastCounts(stdout: string): { added: number; revised: number; removed: number } | null {
  const last = stdout.trimEnd().split("\n").pop() ?? "";
  const m = /^added=(\d+) revised=(\d+) removed=(\d+)$/.exec(last);
  return m ? { added: Number(m[1]), revised: Number(m[2]), removed: Number(m[3]) } : null;
}

let built: string | null = null;
beforeAll(() => {
  if (!haveData) return;
  const b = spawnSync(process.execPath, [path.join(root, "scripts", "build-cli.mjs")], { cwd: root, encoding: "utf8", timeout: 180_000 });
  built = b.status === 0 ? null : `node scripts/build-cli.mjs failed: ${b.stderr || b.stdout}`;
});

for (const target of storeTargets()) {
  describe.skipIf(!haveData)(`ideafront import and revisions on real releases (${target.kind})`, () => {
    let cwd = "";
    beforeAll(async () => {
      expect(built).toBeNull();
      const store = await target.open(); // fresh and migrated; the command opens it again
      await store.close();
      cwd = fs.mkdtempSync(path.join(os.tmpdir(), "ideafront-cli-it-"));
    });
    afterAll(async () => {
      fs.rmSync(cwd, { recursive: true, force: true });
      await target.cleanup();
    });

    const cli = (...args: string[]) => {
      const r = spawnSync(process.execPath, [path.join(root, "bin", "ideafront.mjs"), ...args], {
        cwd,
        encoding: "utf8",
        timeout: 120_000,
        env: { PATH: process.env.PATH ?? "", HOME: os.tmpdir(), IDEAFRONT_DEMO: "off", IDEAFRONT_QUIET: "1", ...target.env() } as unknown as NodeJS.ProcessEnv,
      });
      return { status: r.status, stdout: r.stdout, stderr: r.stderr };
    };
    const importWdi = (label: string, file = path.join(wdiDir, `${label}.csv`), ...extra: string[]) =>
      cli("import", "--file", file, "--format", "csv", "--concept", "researchers_per_million", "--source", "wdi-rd", "--vintage", label, "--map", WDI_MAP, ...extra);

    it("imports the World Bank vintages in date order with the counts of the raw files", () => {
      for (let i = 0; i < WDI_LABELS.length; i++) {
        const r = importWdi(WDI_LABELS[i]!);
        expect(r.stderr).toBe("");
        expect(r.status).toBe(0);
        const now = wdiValues(WDI_LABELS[i]!);
        const exp = i === 0 ? { added: now.size, revised: 0, removed: 0 } : expectedCounts(wdiValues(WDI_LABELS[i - 1]!), now);
        expect(lastCounts(r.stdout)).toEqual(exp); // World Bank WDI SP.POP.SCIE.RD.P6, counts from the raw files
        expect(r.stdout).toContain(`Stored vintage ${i + 1} (${WDI_LABELS[i]}) of wdi-rd: ${now.size} values.`);
      }
    });

    it("lists the revisions between consecutive vintages, with the old and new values of the files in its CSV", () => {
      for (let i = 1; i < WDI_LABELS.length; i++) {
        const before = wdiValues(WDI_LABELS[i - 1]!);
        const after = wdiValues(WDI_LABELS[i]!);
        const csv = path.join(cwd, `revisions-${i}.csv`);
        const r = cli("revisions", "--source", "wdi-rd", "--from", WDI_LABELS[i - 1]!, "--to", WDI_LABELS[i]!, "--csv", csv);
        expect(r.status).toBe(0);
        const exp = expectedCounts(before, after);
        // World Bank WDI SP.POP.SCIE.RD.P6 vintages WDI_LABELS[i-1] -> WDI_LABELS[i]: counts from the raw files
        expect(lastCounts(r.stdout)).toEqual(exp);
        const rows = parse(fs.readFileSync(csv), { columns: true }) as Record<string, string>[];
        expect(rows.length).toBe(exp.added + exp.revised + exp.removed);
        const kinds = { added: 0, revised: 0, removed: 0 };
        for (const row of rows) {
          const key = `${row.economy}|${row.period}`;
          kinds[row.kind as keyof typeof kinds]++;
          expect(row.concept).toBe("researchers_per_million");
          // Old and new values exactly as in the two raw files (World Bank WDI SP.POP.SCIE.RD.P6); tolerance 0
          if (row.kind === "added") expect([row.old_value, Number(row.new_value)], key).toEqual(["", after.get(key)]);
          if (row.kind === "removed") expect([Number(row.old_value), row.new_value], key).toEqual([before.get(key), ""]);
          if (row.kind === "revised") expect([Number(row.old_value), Number(row.new_value)], key).toEqual([before.get(key), after.get(key)]);
        }
        expect(kinds).toEqual(exp);
      }
      // World Bank WDI SP.POP.SCIE.RD.P6: Angola 2011 was 52.41019 in the 2018-08-01 file and 48.42677 in 2025-12-17
      const first = parse(fs.readFileSync(path.join(cwd, "revisions-1.csv")), { columns: true }) as Record<string, string>[];
      expect(first.find((x) => x.economy === "AGO" && x.period === "2011")).toMatchObject({ kind: "revised", old_value: "52.41019", new_value: "48.42677" });
    });

    it("creates no vintage when the same file is imported again", async () => {
      const before = await tableCounts(target);
      const r = importWdi("2026-04-02", path.join(wdiDir, "2026-04-01.csv"));
      expect(r.status).toBe(0);
      expect(r.stdout).toContain("Unchanged: the file equals vintage 3 (2026-04-01) of wdi-rd; nothing stored.");
      expect(lastCounts(r.stdout)).toEqual({ added: 0, revised: 0, removed: 0 });
      expect(await tableCounts(target)).toEqual(before);
    });

    it("refuses bad input with its code and place in one message, and leaves the store unchanged", async () => {
      const before = await tableCounts(target);
      // A column the real file does not have (World Bank WDI files name it "Country Code").
      const missing = cli("import", "--file", path.join(wdiDir, "2026-04-01.csv"), "--format", "csv", "--concept", "researchers_per_million", "--source", "wdi-rd", "--vintage", "2026-05-01", "--map", "economy=ISO3,period=Year,value=Value");
      expect(missing.status).toBe(1);
      expect(missing.stderr.trimEnd().split("\n")).toEqual([
        `The release was not stored: ${path.join(wdiDir, "2026-04-01.csv")} line 1 (field ISO3): the economy column 'ISO3' is not in the header (columns: Country Name, Country Code, Year, Value) [CSV_MISSING_COLUMN]`,
      ]);

      // A value with a thousands space and a decimal comma (malformed corpus, csv-non-numeric.csv).
      const entry = manifest.entries.find((e) => e.file === "csv-non-numeric.csv")!;
      const file = path.join(malformedDir, entry.file);
      const nonNumeric = cli("import", "--file", file, "--format", "csv", "--concept", "researchers_per_million", "--source", "wdi-rd", "--vintage", "2026-05-01", "--map", WDI_MAP);
      expect(nonNumeric.status).toBe(1);
      const { line, column, field } = entry.expect.location;
      expect(nonNumeric.stderr.trimEnd().split("\n")).toEqual([
        `The release was not stored: ${file} line ${line}, column ${column} (field ${field}): '5 013,4' is not a number [${entry.expect.code}]`,
      ]);

      // A concept the tool does not know: a usage error (exit code 2) naming the option.
      const concept = cli("import", "--file", path.join(wdiDir, "2026-04-01.csv"), "--format", "csv", "--concept", "researchers", "--source", "wdi-rd", "--vintage", "2026-05-01", "--map", WDI_MAP);
      expect(concept.status).toBe(2);
      expect(concept.stderr.trimEnd().split("\n")).toHaveLength(1);
      expect(concept.stderr).toMatch(/^--concept researchers: expected one of researchers_fte, researchers_per_million, /);

      expect(await tableCounts(target)).toEqual(before);
    });

    describe("OECD legacy MSTI download (byte-order mark, Flag Codes)", () => {
      type OecdRow = { LOCATION: string; SUBJECT: string; MEASURE: string; TIME: string; Value: string; "Flag Codes": string };
      // Researchers per thousand employed, total: the rows the import selects with its filters.
      const rows = haveData
        ? (parse(fs.readFileSync(oecdFile), { columns: true, bom: true }) as OecdRow[]).map((r, i) => ({ ...r, line: i + 2 })).filter((r) => r.MEASURE === "1000EMPLOYED" && r.SUBJECT === "TOT")
        : [];
      const importOecd = (...extra: string[]) =>
        cli("import", "--file", oecdFile, "--format", "csv", "--concept", "researchers_per_thousand_employed", "--source", "oecd-msti-legacy", "--vintage", "2020-10-01", "--unit", "per thousand employed",
          "--map", "economy=LOCATION,period=TIME,value=Value,status=Flag Codes", "--filter", "MEASURE=1000EMPLOYED", "--filter", "SUBJECT=TOT", ...extra);

      it("refuses the aggregates EU28 and OECD with one message per code, storing nothing", async () => {
        const before = await tableCounts(target);
        const r = importOecd();
        expect(r.status).toBe(1);
        const lines = r.stderr.trimEnd().split("\n");
        expect(lines[0]).toBe("The release was not stored (2 problems):");
        for (const code of ["EU28", "OECD"]) {
          const of = rows.filter((x) => x.LOCATION === code);
          // OECD MSTI legacy CSV (October 2020): first line and number of rows of each aggregate, from the raw file
          expect(lines.filter((l) => l.includes(`"${code}"`))).toEqual([
            `${oecdFile}: line ${of[0]!.line}: economy code "${code}" has no ISO 3166-1 alpha-3 equivalent (map it in economyCodeMap, or skip such codes) (${of.length} observations) [MAP_UNKNOWN_ECONOMY]`,
          ]);
        }
        expect(await tableCounts(target)).toEqual(before);
      });

      it("imports the economies with --skip-unknown-economies, values and flags as in the file", async () => {
        const r = importOecd("--skip-unknown-economies");
        expect(r.stderr).toBe("");
        expect(r.status).toBe(0);
        const kept = rows.filter((x) => x.LOCATION.length === 3 && x.Value !== "");
        expect(r.stdout).toContain(`Stored vintage 1 (2020-10-01) of oecd-msti-legacy: ${kept.length} values.`);

        const store = await target.reopen();
        try {
          const stored = await readAsOf(store, { source: "oecd-msti-legacy" });
          // OECD MSTI legacy CSV (October 2020), every row of 1000EMPLOYED/TOT: value and flag as published; tolerance 0
          expect(new Map(stored.map((o) => [`${o.economy}|${o.period}`, [o.value, o.status]]))).toEqual(
            new Map(kept.map((x) => [`${x.LOCATION}|${x.TIME}`, [Number(x.Value), x["Flag Codes"] === "" ? null : x["Flag Codes"]]])),
          );
          // This download leaves "Flag Codes" blank on every row (counted from the raw file), so no status is stored;
          // a flag read from another column (FREQUENCY "A", say) would show here.
          expect(kept.filter((x) => x["Flag Codes"] !== "").length).toBe(0);
          expect(stored.every((o) => o.status === null)).toBe(true);
          // The byte-order mark did not become part of the first column's name: the economy column LOCATION was found
          // and the economies are the file's own codes.
          expect(new Set(stored.map((o) => o.economy))).toEqual(new Set(kept.map((x) => x.LOCATION)));
          expect(new Set(stored.map((o) => o.unit))).toEqual(new Set(["per thousand employed"]));
          const [v] = await listVintages(store, "oecd-msti-legacy");
          const euRows = rows.filter((x) => x.LOCATION === "EU28").length;
          const oecdRows = rows.filter((x) => x.LOCATION === "OECD").length;
          expect(v!.notes.join("\n")).toContain(`left out ${euRows + oecdRows} observations of codes without an ISO 3166-1 alpha-3 equivalent (EU28 ${euRows}, OECD ${oecdRows})`);
        } finally {
          await store.close();
        }
      });
    });
  });
}

/** Rows of the tables a release writes to, read with the store opened again (no command running). */
async function tableCounts(target: StoreTarget): Promise<Record<string, number>> {
  const store: Store = await target.reopen();
  try {
    const r = await store.sql.query<{ t: string; n: number }>(
      `SELECT 'vintage' AS t, count(*)::int AS n FROM vintage UNION ALL SELECT 'observation', count(*)::int FROM observation
       UNION ALL SELECT 'series', count(*)::int FROM series UNION ALL SELECT 'economy', count(*)::int FROM economy
       UNION ALL SELECT 'source', count(*)::int FROM source`,
    );
    return Object.fromEntries(r.rows.map((x) => [x.t, x.n]));
  } finally {
    await store.close();
  }
}
