// `ideafront tfp`: Tornqvist growth accounting from an accounts file. Checked on Penn World Table
// 10.01 (../shared/data/pwt, Feenstra, Inklaar & Timmer 2015): the output tfp_growth reproduces
// PWT's own rtfpna growth within 1e-4 a year for every country-year with all inputs [verified,
// shared/data/README.md]. Skips when the data folder is absent.
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { Command } from "commander";
import { parse } from "csv-parse/sync";
import { describe, expect, it } from "vitest";
import { register as registerTfp } from "./commands/tfp";
import { tfpCsv } from "./run-tfp";

const pwtFile = path.resolve(import.meta.dirname, "../../../shared/data/pwt/pwt10.01-growth-subset.csv");
const hasPwt = existsSync(pwtFile);
if (!hasPwt) console.warn(`SKIP tfp command on PWT: ${pwtFile} not found (reference data lives in ../shared/data)`);

describe("tfp on an inline accounts file (invented values)", () => {
  it("writes economy,year,tfp,tfp_growth with the index at 1 in the first complete year", async () => {
    const work = mkdtempSync(path.join(tmpdir(), "ideafront-tfp-"));
    const accounts = path.join(work, "accounts.csv");
    writeFileSync(
      accounts,
      "economy,year,output,employment,hours,human_capital,capital_services,labour_share\n" +
        "XAA,1999,,10,2000,3,1,0.6\nXAA,2000,100,10,2000,3,1,0.6\nXAA,2001,103,10,2000,3,1.05,0.6\n",
    );
    const out = path.join(work, "tfp.csv");
    process.env.IDEAFRONT_QUIET = "1";
    const program = new Command();
    program.exitOverride();
    registerTfp(program);
    await program.parseAsync(["node", "ideafront", "tfp", "--accounts", accounts, "--out", out]);
    const rows = parse(readFileSync(out, "utf8"), { columns: true }) as Record<string, string>[];
    expect(Object.keys(rows[0])).toEqual(["economy", "year", "tfp", "tfp_growth"]);
    expect(rows[0]).toEqual({ economy: "XAA", year: "1999", tfp: "", tfp_growth: "" }); // output missing
    expect(rows[1]).toEqual({ economy: "XAA", year: "2000", tfp: "1", tfp_growth: "" }); // first year with all inputs
    const expected = Math.log(1.03) - 0.4 * Math.log(1.05); // dln Y - (1 - a) dln K with a = 0.6, by hand
    expect(Math.abs(Number(rows[2].tfp_growth) - expected)).toBeLessThan(1e-15);
    expect(Math.abs(Number(rows[2].tfp) - Math.exp(expected))).toBeLessThan(1e-15);
  });
});

describe.skipIf(!hasPwt)("tfp on Penn World Table 10.01", () => {
  it("reproduces PWT rtfpna growth within 1e-4 a year for every country-year with all inputs", () => {
    const text = readFileSync(pwtFile, "utf8");
    const { csv, economies } = tfpCsv(text, pwtFile);
    const out = parse(csv, { columns: true }) as Record<string, string>[];
    const pwt = parse(text, { columns: true }) as Record<string, string>[];
    const rtfpna = new Map(pwt.map((r) => [`${r.isocode}|${r.year}`, r.rtfpna === "" ? null : Number(r.rtfpna)]));
    let compared = 0;
    let worst = 0;
    for (const row of out) {
      if (row.tfp_growth === "") continue;
      const now = rtfpna.get(`${row.economy}|${row.year}`);
      const before = rtfpna.get(`${row.economy}|${Number(row.year) - 1}`);
      if (now == null || before == null) continue;
      worst = Math.max(worst, Math.abs(Number(row.tfp_growth) - Math.log(now / before)));
      compared++;
    }
    console.log(`tfp command on PWT 10.01: ${economies} economies, ${compared} country-years compared, largest |error| ${worst.toExponential(2)}`);
    expect(compared).toBeGreaterThan(3000);
    expect(worst).toBeLessThan(1e-4); // [verified] PWT 10.01 rtfpna growth, shared/data/README.md, tol 1e-4 a year
  });
});
