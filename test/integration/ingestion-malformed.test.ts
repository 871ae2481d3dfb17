/**
 * The malformed-payload corpus (test/fixtures/malformed) through the whole import path on real
 * stores: every manifest entry, imported with importRelease under a minimal source definition of
 * its format, must be refused with that entry's code and location (computed by make-corpus.py from
 * the file text, independently of the parsers), and the store must be exactly as before: same
 * number of rows in vintage, observation, series, economy and source.
 */
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Store } from "@/lib/store/db";
import { upsertSource } from "@/lib/store/vintages";
import { ImportError, importRelease } from "@/lib/jobs/import-release";
import { parseSourceDefinition, type SourceDefinition, type SourceDefinitionInput } from "@/lib/ingestion/sources";
import { isIngestErrorCode } from "@/lib/ingestion/errors";
import type { PayloadFormat } from "@/lib/ingestion/parse";
import { storeTargets } from "./support/stores";

interface Entry {
  file: string;
  format: PayloadFormat;
  options: Record<string, unknown>;
  expect: { code: string; location: Record<string, unknown> };
  why: string;
}
const dir = path.resolve(import.meta.dirname, "../fixtures/malformed");
const manifest = JSON.parse(fs.readFileSync(path.join(dir, "manifest.json"), "utf8")) as { entries: Entry[] };

const wdiFile = path.resolve(import.meta.dirname, "../../../shared/data/wdi/sp.pop.scie.rd.p6/2026-04-01.csv");
const haveWdi = fs.existsSync(wdiFile);
if (!haveWdi) console.warn(`[skip] ${wdiFile} is absent: the malformed corpus runs against an empty store instead of one holding a real vintage.`);

/** The least a source of each format needs; the economy dimension is the one the corpus files use. */
function definitionFor(format: PayloadFormat): SourceDefinition {
  const query = { id: "rd", concept: "researchers_per_million" as const, unit: "per million people" };
  const base = { title: `malformed ${format}`, queries: [query] };
  const byFormat: Record<PayloadFormat, SourceDefinitionInput> = {
    "sdmx-json": { ...base, name: "bad-sdmx-json", kind: "file", format, queries: [{ ...query, economyDimension: "REF_AREA" }] },
    "sdmx-csv": { ...base, name: "bad-sdmx-csv", kind: "file", format, queries: [{ ...query, economyDimension: "REF_AREA" }] },
    jsonstat: { ...base, name: "bad-jsonstat", kind: "file", format, queries: [{ ...query, economyDimension: "area" }] },
    csv: { ...base, name: "bad-csv", kind: "file", format, queries: [{ ...query, economyDimension: "Country Code" }] },
    // A World Bank source is fetched, so it names an endpoint; this one is never contacted.
    "worldbank-json": {
      ...base,
      name: "bad-worldbank",
      kind: "worldbank",
      format,
      baseUrl: "http://127.0.0.1:9/wb/v2",
      urlTemplate: "{base}/country/all/indicator/{indicator}?format=json&per_page={per_page}&page={page}",
      queries: [{ ...query, indicator: "SP.POP.SCIE.RD.P6" }],
    },
  };
  return parseSourceDefinition(byFormat[format]);
}

for (const target of storeTargets()) {
  describe(`malformed corpus through importRelease leaves the store unchanged (${target.kind})`, () => {
    let store: Store;
    let before: Record<string, number>;
    const counts = async () => {
      const r = await store.sql.query<{ t: string; n: number }>(
        `SELECT 'vintage' AS t, count(*)::int AS n FROM vintage UNION ALL SELECT 'observation', count(*)::int FROM observation
         UNION ALL SELECT 'series', count(*)::int FROM series UNION ALL SELECT 'economy', count(*)::int FROM economy
         UNION ALL SELECT 'source', count(*)::int FROM source`,
      );
      return Object.fromEntries(r.rows.map((x) => [x.t, x.n]));
    };

    beforeAll(async () => {
      store = await target.open();
      const formats = [...new Set(manifest.entries.map((e) => e.format))];
      for (const f of formats) {
        const def = definitionFor(f);
        await upsertSource(store, { name: def.name, title: def.title, kind: def.kind, format: def.format, config: def });
      }
      if (haveWdi) {
        // A real vintage first, so "unchanged" is about a store holding data: World Bank WDI SP.POP.SCIE.RD.P6, 2026-04-01.
        const def = definitionFor("csv");
        const res = await importRelease(store, {
          def,
          label: "2026-04-01",
          payloads: [{ body: fs.createReadStream(wdiFile), name: "2026-04-01.csv", parserOptions: { map: "economy=Country Code,period=Year,value=Value" } }],
        });
        expect(res.status).toBe("created");
      }
      before = await counts();
      if (haveWdi) expect(before.observation).toBeGreaterThan(2000);
    });
    afterAll(async () => {
      await store?.close();
      await target.cleanup();
    });

    it("has at least 30 entries, each with a known code", () => {
      expect(manifest.entries.length).toBeGreaterThanOrEqual(30);
      for (const e of manifest.entries) expect(isIngestErrorCode(e.expect.code), e.file).toBe(true);
    });

    for (const entry of manifest.entries) {
      it(`${entry.file}: refused with ${entry.expect.code}, nothing written`, async () => {
        let thrown: unknown;
        try {
          await importRelease(store, {
            def: definitionFor(entry.format),
            label: "2030-01-01",
            payloads: [{ body: fs.readFileSync(path.join(dir, entry.file)), name: entry.file, parserOptions: entry.options }],
          });
        } catch (e) {
          thrown = e;
        }
        expect(thrown, `${entry.file} should be refused (${entry.why})`).toBeInstanceOf(ImportError);
        const first = (thrown as ImportError).problems[0]!;
        expect(first.code).toBe(entry.expect.code);
        // The manifest's location (line/column or JSON path), plus the payload's name the import adds.
        expect(first.location).toEqual({ file: entry.file, ...entry.expect.location });
        expect((thrown as ImportError).message).toContain(`[${entry.expect.code}]`);
        expect(await counts()).toEqual(before);
      });
    }
  });
}
