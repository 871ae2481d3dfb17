// Reading the panel and accounts CSV files: one test per behaviour, tiny inline fixtures (invented
// values), assertions on the sentence, the row and the column.
import { describe, expect, it } from "vitest";
import { InputFileError, readAccountsCsv, readPanelCsv } from "./panel-csv";
import { UsageError } from "./shared";

const header = "economy,year,researchers,tfp,population";

function problem(run: () => unknown): InputFileError {
  try {
    run();
  } catch (err) {
    expect(err).toBeInstanceOf(InputFileError);
    expect(err).toBeInstanceOf(UsageError); // printed as one sentence, exit code 2
    return err as InputFileError;
  }
  throw new Error("expected an InputFileError");
}

describe("readPanelCsv", () => {
  it("reads a valid panel, sorting economies and years, with missing values as null", () => {
    const text = `\uFEFF${header},capital,note\nXAB,2001,12,1.02,100,5,x\nXAA,2001,11,NA,101,,\nXAA,2000,10,1,100,4,y\nXAB,2000,11,1,99,4.5,\n`;
    const { panel, hasCapital, rows, ignoredColumns } = readPanelCsv(text, "p.csv");
    expect(rows).toBe(4);
    expect(hasCapital).toBe(true);
    expect(ignoredColumns).toEqual(["note"]);
    expect(panel.map((s) => s.economy)).toEqual(["XAA", "XAB"]);
    expect(panel[0]).toEqual({ economy: "XAA", years: [2000, 2001], researchers: [10, 11], tfp: [1, null], population: [100, 101], capital: [4, null] });
  });

  it("names a missing column", () => {
    const e = problem(() => readPanelCsv("economy,year,researchers,population\nXAA,2000,1,1\n", "p.csv"));
    expect(e.message).toBe('p.csv, row 1: missing column "tfp", the TFP level (an index); the header has economy, year, researchers, population.');
    expect([e.row, e.column]).toEqual([1, "tfp"]);
  });

  it("names the row and column of a non-numeric value", () => {
    const e = problem(() => readPanelCsv(`${header}\nXAA,2000,10,1,100\nXAA,2001,1O,1.01,100\n`, "p.csv"));
    expect(e.message).toBe('p.csv, row 3, column "researchers": "1O" is not a number (leave the cell empty or write NA for a missing value).');
    expect([e.row, e.column]).toEqual([3, "researchers"]);
  });

  it("names the row and column of a non-positive level", () => {
    const e = problem(() => readPanelCsv(`${header}\nXAA,2000,10,1,100\nXAA,2001,11,0,100\n`, "p.csv"));
    expect(e.message).toBe('p.csv, row 3, column "tfp": 0 is not positive (levels must be positive; leave the cell empty for a missing value).');
  });

  it("names both rows of a duplicate economy-year", () => {
    const e = problem(() => readPanelCsv(`${header}\nXAA,2000,10,1,100\nXAA,2001,11,1,100\nXAA,2000,12,1,100\n`, "p.csv"));
    expect(e.message).toBe("p.csv, row 4: economy XAA, year 2000 already appears in row 2 (duplicate economy-year).");
    expect(e.row).toBe(4);
  });

  it("refuses an economy with too few years", () => {
    const e = problem(() => readPanelCsv(`${header}\nXAA,2000,10,1,100\nXAA,2001,11,1,100\nXAB,2000,10,1,100\n`, "p.csv"));
    expect(e.message).toBe("p.csv, row 4: economy XAB has 1 year of data; at least 2 are needed (too few years).");
  });

  it("names bad years, empty codes, ragged rows and broken quoting", () => {
    expect(problem(() => readPanelCsv(`${header}\nXAA,20x0,10,1,100\n`, "p.csv")).message).toBe('p.csv, row 2, column "year": "20x0" is not a year (a whole number such as 2019).');
    expect(problem(() => readPanelCsv(`${header}\n,2000,10,1,100\n`, "p.csv")).message).toBe('p.csv, row 2, column "economy": the economy code is empty.');
    expect(problem(() => readPanelCsv(`${header}\nXAA,2000,10,1\n`, "p.csv")).message).toBe("p.csv, row 2: 4 fields but the header has 5 columns.");
    expect(problem(() => readPanelCsv(`${header}\nXAA,2000,"10,1,100\n`, "p.csv")).message).toMatch(/^p\.csv, row \d+: the file is not valid CSV \(Quote Not Closed/);
    expect(problem(() => readPanelCsv("", "p.csv")).message).toBe("p.csv: the file is empty (expected a header row).");
    expect(problem(() => readPanelCsv(`${header},TFP\n`, "p.csv")).message).toBe('p.csv, row 1: column "TFP" appears twice in the header (columns 4 and 6).');
  });

  it("reads spaces around cells and Windows line ends alike, whether or not some cell is quoted", () => {
    const plain = `${header}\r\n XAA , 2000 ,10, 1 ,100\r\nXAA,2001,11,1.01,101\r\n`;
    const quoted = `${header}\r\n"XAA" , 2000 ,10, 1 ,100\r\nXAA,2001,11,1.01,101\r\n`;
    const expected = { economy: "XAA", years: [2000, 2001], researchers: [10, 11], tfp: [1, 1.01], population: [100, 101] };
    expect(readPanelCsv(plain, "p.csv").panel).toEqual([expected]); // d3-dsv path (no quotes)
    expect(readPanelCsv(quoted, "p.csv").panel).toEqual([expected]); // csv-parse path
  });

  it("counts rows as a spreadsheet does across quoted line breaks", () => {
    const e = problem(() => readPanelCsv(`${header},note\nXAA,2000,10,1,100,"two\nlines"\nXAA,2001,-1,1,100,x\n`, "p.csv"));
    expect(e.row).toBe(4); // header row 1, a two-line record rows 2-3, the bad record starts on line 4
    const blank = problem(() => readPanelCsv(`${header}\nXAA,2000,10,1,100\n\nXAA,2001,-1,1,100\n`, "p.csv"));
    expect(blank.row).toBe(4); // a blank line 3 is skipped but still counted
    const plain = problem(() => readPanelCsv(`${header}\nXAA,2000,10,1,100\nXAA,2001,-1,1,100\n`, "p.csv"));
    expect(plain.row).toBe(3); // no quotes, no blank lines: one record per line
  });
});

describe("readAccountsCsv", () => {
  it("accepts Penn World Table column names and our own", () => {
    const pwt = "isocode,country,year,rgdpna,emp,avh,hc,rkna,labsh\nXAA,A,2000,100,10,2000,3,1,0.6\nXAA,A,2001,103,10,2000,3,1.05,0.6\n";
    const ours = "economy,year,output,employment,hours,human_capital,capital_services,labour_share\nXAA,2000,100,10,2000,3,1,0.6\nXAA,2001,103,10,2000,3,1.05,0.6\n";
    for (const text of [pwt, ours]) {
      const rows = readAccountsCsv(text, "a.csv").economies.get("XAA")!;
      expect(rows[1]).toEqual({ year: 2001, output: 103, employment: 10, hours: 2000, humanCapital: 3, capitalServices: 1.05, labourShare: 0.6 });
    }
  });

  it("names a missing column and a labour share outside (0, 1]", () => {
    expect(problem(() => readAccountsCsv("isocode,year,rgdpna,emp,avh,hc,labsh\n", "a.csv")).message).toBe(
      'a.csv, row 1: missing column "capital_services" (or "rkna"), capital services at constant national prices; the header has isocode, year, rgdpna, emp, avh, hc, labsh.',
    );
    const e = problem(() => readAccountsCsv("isocode,year,rgdpna,emp,avh,hc,rkna,labsh\nXAA,2000,100,10,2000,3,1,1.6\n", "a.csv"));
    expect(e.message).toBe('a.csv, row 2, column "labsh": 1.6 is outside (0, 1] (a labour share).');
  });
});
