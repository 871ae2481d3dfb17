/**
 * Researchers in full-time equivalents derived from researchers per million x population / 1e6,
 * on real releases: World Bank WDI SP.POP.SCIE.RD.P6 and SP.POP.TOTL (vintages 2018-08-01 and
 * 2026-04-01) and PWT 10.01 rtfpna (the TFP input a panel needs), imported through the ingestion
 * path, then read back by assemblePanel with researchers { perMillion, population } as of each
 * vintage. Expected values are computed here from the raw files; the derivation text is checked.
 */
import fs from "node:fs";
import path from "node:path";
import { parse } from "csv-parse/sync";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Store } from "@/lib/store/db";
import { upsertSource } from "@/lib/store/vintages";
import { assemblePanel, resolveAsOf, type ModelInputs } from "@/lib/store/panel";
import { importRelease } from "@/lib/jobs/import-release";
import { parseSourceDefinition } from "@/lib/ingestion/sources";
import type { Concept } from "@/lib/ingestion/types";
import { storeTargets } from "./support/stores";

const data = path.resolve(import.meta.dirname, "../../../shared/data");
const files = {
  perMillion: (v: string) => path.join(data, "wdi/sp.pop.scie.rd.p6", `${v}.csv`),
  population: (v: string) => path.join(data, "wdi/sp.pop.totl", `${v}.csv`),
  pwt: path.join(data, "pwt/pwt10.01-growth-subset.csv"),
};
const VINTAGES = ["2018-08-01", "2026-04-01"]; // World Bank WDI vintages present for both indicators
const haveData = [...VINTAGES.flatMap((v) => [files.perMillion(v), files.population(v)]), files.pwt].every((f) => fs.existsSync(f));
if (!haveData) console.warn(`[skip] ${data} lacks the WDI or PWT files: the derived-researchers tests are skipped (CI has ../shared/data).`);

const ECONOMIES = ["DEU", "FRA", "JPN", "KOR", "USA"];
const YEARS = [2000, 2010, 2015];

/** economy|year -> value of a raw WDI file. */
function wdi(file: string): Map<string, number> {
  const rows = parse(fs.readFileSync(file), { columns: true, bom: true }) as Record<string, string>[];
  return new Map(rows.filter((r) => r.Value !== "").map((r) => [`${r["Country Code"]}|${r.Year}`, Number(r.Value)]));
}

function fileSource(name: string, concept: Concept, unit: string, economyColumn: string) {
  return parseSourceDefinition({ name, title: name, kind: "file", format: "csv", queries: [{ id: concept, concept, unit, economyDimension: economyColumn }] });
}

const sources = {
  perMillion: fileSource("wdi-rd", "researchers_per_million", "per million people", "Country Code"),
  population: fileSource("wdi-pop", "population", "persons", "Country Code"),
  tfp: fileSource("pwt", "tfp_index", "index, 2017 = 1", "isocode"),
};
const inputs: ModelInputs = {
  researchers: { perMillion: { source: "wdi-rd", concept: "researchers_per_million" }, population: { source: "wdi-pop", concept: "population" } },
  tfp: { source: "pwt", concept: "tfp_index" },
};

for (const target of storeTargets()) {
  describe.skipIf(!haveData)(`researchers FTE = per million x population / 1e6 (${target.kind})`, () => {
    let store: Store;
    beforeAll(async () => {
      store = await target.open();
      for (const def of Object.values(sources)) await upsertSource(store, { name: def.name, title: def.title, kind: def.kind, format: def.format, config: def });
      const load = (def: (typeof sources)[keyof typeof sources], label: string, file: string, map: string) =>
        importRelease(store, { def, label, payloads: [{ body: fs.createReadStream(file), name: path.basename(file), parserOptions: { map } }] });
      await load(sources.tfp, "10.01", files.pwt, "economy=isocode,period=year,value=rtfpna");
      for (const v of VINTAGES) {
        await load(sources.perMillion, v, files.perMillion(v), "economy=Country Code,period=Year,value=Value");
        await load(sources.population, v, files.population(v), "economy=Country Code,period=Year,value=Value");
      }
    });
    afterAll(async () => {
      await store?.close();
      await target.cleanup();
    });

    it("derives the counts of each vintage from that vintage's per-million and population values", async () => {
      for (const [i, v] of VINTAGES.entries()) {
        const perMillion = wdi(files.perMillion(v));
        const population = wdi(files.population(v));
        const asOf = await resolveAsOf(store, ["wdi-rd", "wdi-pop", "pwt"], { seqs: { "wdi-rd": i + 1, "wdi-pop": i + 1 } });
        expect(asOf["wdi-rd"]).toEqual({ seq: i + 1, label: v });
        const { panel, derivation } = await assemblePanel(store, inputs, asOf, { economies: ECONOMIES });
        expect(derivation).toBe("researchers = wdi-rd/researchers_per_million x wdi-pop/population / 1e6");
        expect(panel.map((p) => p.economy)).toEqual(ECONOMIES);
        for (const e of ECONOMIES) {
          const series = panel.find((p) => p.economy === e)!;
          for (const y of YEARS) {
            const pm = perMillion.get(`${e}|${y}`);
            const pop = population.get(`${e}|${y}`);
            const got = series.researchers[series.years.indexOf(y)];
            // World Bank WDI SP.POP.SCIE.RD.P6 x SP.POP.TOTL, vintage v, e y: per million x population / 1e6;
            // relative tolerance 1e-12 (the same two floating-point operations)
            if (pm === undefined || pop === undefined) expect(got, `${v} ${e} ${y}`).toBeNull();
            else expect(Math.abs(got! - (pm * pop) / 1e6) / ((pm * pop) / 1e6), `${v} ${e} ${y}`).toBeLessThan(1e-12);
          }
        }
      }
    });

    it("matches counts worked out by hand from the files", async () => {
      const latest = await assemblePanel(store, inputs, await resolveAsOf(store, ["wdi-rd", "wdi-pop", "pwt"]), { economies: ECONOMIES });
      const at = (e: string, y: number) => {
        const s = latest.panel.find((p) => p.economy === e)!;
        return s.researchers[s.years.indexOf(y)]!;
      };
      // WDI 2026-04-01: DEU 2015 4755.29531 per million x 81,686,611 people / 1e6 = 388,443.9581781; tolerance 5e-7
      expect(at("DEU", 2015)).toBeCloseTo(388443.9581781, 6);
      // WDI 2026-04-01: KOR 2010 5429.43919 x 49,554,112 / 1e6 = 269,051.0377184; tolerance 5e-7
      expect(at("KOR", 2010)).toBeCloseTo(269051.0377184, 6);
      // WDI 2026-04-01: USA 2015 3858.04036 x 321,815,121 / 1e6 = 1,241,575.7252763; tolerance 5e-7
      expect(at("USA", 2015)).toBeCloseTo(1241575.7252763, 6);
      // WDI 2018-08-01 has no USA 2015 per-million value: the derived count is missing, not zero
      const old = await assemblePanel(store, inputs, await resolveAsOf(store, ["wdi-rd", "wdi-pop", "pwt"], { seqs: { "wdi-rd": 1, "wdi-pop": 1 } }), { economies: ["USA"] });
      expect(old.panel[0]!.researchers[old.panel[0]!.years.indexOf(2015)]).toBeNull();
      // PWT 10.01 rtfpna, DEU 2015 = 0.9770134091377258 (the TFP column of the same panel); tolerance 0
      const deu = latest.panel.find((p) => p.economy === "DEU")!;
      expect(deu.tfp[deu.years.indexOf(2015)]).toBe(0.9770134091377258);
    });
  });
}
