/**
 * Reading and validating the CSV files of the command line: the estimation panel
 * (economy,year,researchers,tfp,population[,capital]) and the national accounts for growth
 * accounting (Penn World Table names accepted). Every problem stops the read with one sentence
 * naming the file, the row (as a spreadsheet numbers it: the header is row 1) and the column:
 * missing column, non-numeric value, non-positive level, duplicate economy-year, too few years.
 * Missing values are empty cells or NA.
 */
import { parse } from "csv-parse/sync";
import { csvParseRows } from "d3-dsv";
import type { NationalAccountsRow } from "../estimation/growth-accounting";
import type { KpfEconomySeries } from "../estimation/kpf-sample";
import { UsageError } from "./shared";

/** A problem in an input file, with its place. Printed as one sentence; exit code 2. */
export class InputFileError extends UsageError {
  constructor(
    message: string,
    readonly file: string,
    readonly row: number | null,
    readonly column: string | null,
  ) {
    super(message);
    this.name = "InputFileError";
  }
}

interface CsvRecord {
  readonly cells: readonly string[];
  /** Row number as a spreadsheet shows it (header = 1). */
  readonly row: number;
}

const MISSING = new Set(["", "NA", "na", "N/A", "NaN", ".."]);

function readRecords(text: string, file: string): { header: string[]; records: CsvRecord[] } {
  let rows: CsvRecord[];
  try {
    rows = !text.includes('"') && !/\n[ \t]*\r?\n/.test(text) && !/\r(?!\n)/.test(text) ? splitUnquoted(text) : parseQuoted(text);
  } catch (err) {
    const e = err as { message?: string; lines?: number };
    throw new InputFileError(`${file}${e.lines ? `, row ${e.lines}` : ""}: the file is not valid CSV (${e.message ?? String(err)}).`, file, e.lines ?? null, null);
  }
  if (rows.length === 0) throw new InputFileError(`${file}: the file is empty (expected a header row).`, file, null, null);
  const header = rows[0].cells.map((h) => h.trim());
  const seen = new Map<string, number>();
  header.forEach((name, i) => {
    const lower = name.toLowerCase();
    if (seen.has(lower)) throw new InputFileError(`${file}, row 1: column "${name}" appears twice in the header (columns ${seen.get(lower)! + 1} and ${i + 1}).`, file, 1, name);
    seen.set(lower, i);
  });
  for (let r = 1; r < rows.length; r++) {
    const { cells, row } = rows[r];
    if (cells.length !== header.length) {
      throw new InputFileError(`${file}, row ${row}: ${cells.length} fields but the header has ${header.length} columns.`, file, row, null);
    }
  }
  return { header, records: rows.slice(1) };
}

/**
 * A file without quotes, blank lines or lone carriage returns: every record is one line (row =
 * record index + 1) and no quoting error is possible, so d3-dsv splits it (several times faster
 * than csv-parse); cells are trimmed only when the file has spaces or tabs at all.
 */
function splitUnquoted(text: string): CsvRecord[] {
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  const trim = /[ \t]/.test(body);
  return csvParseRows(body, (cells, i) => ({ cells: trim ? cells.map((cell) => cell.trim()) : cells, row: i + 1 }));
}

/** Any other file: csv-parse, which reports each record's first line and any quoting error (with its line). */
function parseQuoted(text: string): CsvRecord[] {
  const parsed = parse(text, { info: true, bom: true, skip_empty_lines: true, relax_column_count: true, trim: true }) as unknown as { record: string[]; info: { lines: number } }[];
  return parsed.map(({ record, info }) => {
    // info.lines is the record's last line: step back over the newlines inside quoted cells.
    let newlines = 0;
    for (const cell of record) for (let i = 0; i < cell.length; i++) if (cell.charCodeAt(i) === 10) newlines++;
    return { cells: record, row: info.lines - newlines };
  });
}

function columnIndex(header: readonly string[], names: readonly string[]): number {
  for (const name of names) {
    const i = header.findIndex((h) => h.toLowerCase() === name);
    if (i >= 0) return i;
  }
  return -1;
}

function requireColumn(header: readonly string[], names: readonly string[], file: string, purpose: string): number {
  const i = columnIndex(header, names);
  if (i < 0) {
    const shown = names.length > 1 ? `"${names[0]}" (or ${names.slice(1).map((n) => `"${n}"`).join(", ")})` : `"${names[0]}"`;
    throw new InputFileError(`${file}, row 1: missing column ${shown}, ${purpose}; the header has ${header.join(", ")}.`, file, 1, names[0]);
  }
  return i;
}

/** Parses a number cell: null for a missing value; throws naming row and column otherwise. */
function numberCell(record: CsvRecord, index: number, header: readonly string[], file: string): number | null {
  const raw = record.cells[index];
  if (MISSING.has(raw)) return null;
  const value = Number(raw);
  if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(raw) || !Number.isFinite(value)) {
    throw new InputFileError(`${file}, row ${record.row}, column "${header[index]}": "${raw}" is not a number (leave the cell empty or write NA for a missing value).`, file, record.row, header[index]);
  }
  return value;
}

function positiveCell(record: CsvRecord, index: number, header: readonly string[], file: string): number | null {
  const value = numberCell(record, index, header, file);
  if (value !== null && !(value > 0)) {
    throw new InputFileError(
      `${file}, row ${record.row}, column "${header[index]}": ${record.cells[index]} is not positive (levels must be positive; leave the cell empty for a missing value).`,
      file,
      record.row,
      header[index],
    );
  }
  return value;
}

function yearCell(record: CsvRecord, index: number, header: readonly string[], file: string): number {
  const raw = record.cells[index];
  const year = Number(raw);
  if (!/^\d{1,4}$/.test(raw) || !Number.isInteger(year)) {
    throw new InputFileError(`${file}, row ${record.row}, column "${header[index]}": "${raw}" is not a year (a whole number such as 2019).`, file, record.row, header[index]);
  }
  return year;
}

function economyCell(record: CsvRecord, index: number, header: readonly string[], file: string): string {
  const code = record.cells[index];
  if (code.length === 0) throw new InputFileError(`${file}, row ${record.row}, column "${header[index]}": the economy code is empty.`, file, record.row, header[index]);
  return code;
}

/** Groups records by economy, sorted by year, refusing duplicate economy-years and economies with fewer than `minYears` rows. */
function groupByEconomy<T extends { year: number; row: number }>(items: { economy: string; item: T }[], file: string, minYears: number): Map<string, T[]> {
  const groups = new Map<string, T[]>();
  const seen = new Map<string, number>();
  for (const { economy, item } of items) {
    const key = `${economy}\u0000${item.year}`;
    const earlier = seen.get(key);
    if (earlier !== undefined) {
      throw new InputFileError(`${file}, row ${item.row}: economy ${economy}, year ${item.year} already appears in row ${earlier} (duplicate economy-year).`, file, item.row, "year");
    }
    seen.set(key, item.row);
    let list = groups.get(economy);
    if (!list) groups.set(economy, (list = []));
    list.push(item);
  }
  for (const [economy, list] of groups) {
    list.sort((a, b) => a.year - b.year);
    if (list.length < minYears) {
      throw new InputFileError(
        `${file}, row ${list[0].row}: economy ${economy} has ${list.length} year${list.length === 1 ? "" : "s"} of data; at least ${minYears} are needed (too few years).`,
        file,
        list[0].row,
        "year",
      );
    }
  }
  return groups;
}

/** The panel read from a CSV file. */
export interface PanelCsv {
  readonly panel: readonly KpfEconomySeries[];
  /** Whether a capital column was present. */
  readonly hasCapital: boolean;
  /** Data rows read. */
  readonly rows: number;
  /** Columns not used. */
  readonly ignoredColumns: readonly string[];
}

/**
 * Reads an estimation panel: required columns economy, year, researchers, tfp, population (any
 * order, case-insensitive), optional capital; other columns are ignored. Levels must be positive;
 * empty or NA cells are missing. Each economy needs at least 2 years; an economy-year may appear
 * once. Economies are returned sorted by code, years increasing.
 * Throws InputFileError (a UsageError: exit code 2) naming file, row and column.
 * Example: readPanelCsv("economy,year,researchers,tfp,population\nXAA,2000,10,1,100\nXAA,2001,11,1.01,101\n", "p.csv").panel[0].years -> [2000, 2001]
 * Reference: RFC 4180 (CSV), parsed by d3-dsv 3 (files without quotes) or csv-parse 7; issue 3 (panel columns).
 */
export function readPanelCsv(text: string, file: string): PanelCsv {
  const { header, records } = readRecords(text, file);
  const iEconomy = requireColumn(header, ["economy"], file, "the economy code of each row");
  const iYear = requireColumn(header, ["year"], file, "the calendar year");
  const iResearchers = requireColumn(header, ["researchers"], file, "research labour (full-time equivalents)");
  const iTfp = requireColumn(header, ["tfp"], file, "the TFP level (an index)");
  const iPopulation = requireColumn(header, ["population"], file, "the population");
  const iCapital = columnIndex(header, ["capital"]);
  const used = new Set([iEconomy, iYear, iResearchers, iTfp, iPopulation, iCapital]);
  type Item = { year: number; row: number; researchers: number | null; tfp: number | null; population: number | null; capital: number | null };
  const items: { economy: string; item: Item }[] = [];
  for (const record of records) {
    items.push({
      economy: economyCell(record, iEconomy, header, file),
      item: {
        year: yearCell(record, iYear, header, file),
        row: record.row,
        researchers: positiveCell(record, iResearchers, header, file),
        tfp: positiveCell(record, iTfp, header, file),
        population: positiveCell(record, iPopulation, header, file),
        capital: iCapital >= 0 ? positiveCell(record, iCapital, header, file) : null,
      },
    });
  }
  if (items.length === 0) throw new InputFileError(`${file}: the file has a header but no data rows.`, file, null, null);
  const groups = groupByEconomy(items, file, 2);
  const panel: KpfEconomySeries[] = [];
  for (const economy of [...groups.keys()].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0))) {
    const list = groups.get(economy)!;
    panel.push(
      Object.freeze({
        economy,
        years: list.map((x) => x.year),
        researchers: list.map((x) => x.researchers),
        tfp: list.map((x) => x.tfp),
        population: list.map((x) => x.population),
        ...(iCapital >= 0 ? { capital: list.map((x) => x.capital) } : {}),
      }),
    );
  }
  return Object.freeze({
    panel: Object.freeze(panel),
    hasCapital: iCapital >= 0,
    rows: records.length,
    ignoredColumns: Object.freeze(header.filter((_, i) => !used.has(i))),
  });
}

/** National accounts read from a CSV file, by economy. */
export interface AccountsCsv {
  readonly economies: ReadonlyMap<string, readonly NationalAccountsRow[]>;
  readonly rows: number;
}

/**
 * Reads national accounts for growth accounting. Columns (case-insensitive; Penn World Table names
 * or ours): economy|isocode, year, output|rgdpna, employment|emp, hours|avh,
 * human_capital|hc, capital_services|rkna, labour_share|labsh. Other columns are ignored. Levels
 * must be positive and the labour share in (0, 1]; empty or NA cells are missing. An economy-year
 * may appear once; each economy needs at least 2 years.
 * Throws InputFileError naming file, row and column.
 * Example: a PWT 10.01 extract with isocode, year, rgdpna, emp, avh, hc, rkna, labsh reads as is;
 *   readAccountsCsv(pwtText, "pwt.csv").economies.get("USA")![0].output is rgdpna of the first year.
 * Reference: Feenstra, Inklaar & Timmer (2015), AER 105(10) (PWT variable names); RFC 4180.
 */
export function readAccountsCsv(text: string, file: string): AccountsCsv {
  const { header, records } = readRecords(text, file);
  const iEconomy = requireColumn(header, ["economy", "isocode"], file, "the economy code of each row");
  const iYear = requireColumn(header, ["year"], file, "the calendar year");
  const iOutput = requireColumn(header, ["output", "rgdpna"], file, "real GDP at constant national prices");
  const iEmp = requireColumn(header, ["employment", "emp"], file, "persons engaged");
  const iHours = requireColumn(header, ["hours", "avh"], file, "average annual hours worked");
  const iHc = requireColumn(header, ["human_capital", "hc"], file, "the human capital index");
  const iK = requireColumn(header, ["capital_services", "rkna"], file, "capital services at constant national prices");
  const iShare = requireColumn(header, ["labour_share", "labsh"], file, "the labour share of GDP");
  type Item = NationalAccountsRow & { row: number };
  const items: { economy: string; item: Item }[] = [];
  for (const record of records) {
    const share = numberCell(record, iShare, header, file);
    if (share !== null && !(share > 0 && share <= 1)) {
      throw new InputFileError(`${file}, row ${record.row}, column "${header[iShare]}": ${record.cells[iShare]} is outside (0, 1] (a labour share).`, file, record.row, header[iShare]);
    }
    items.push({
      economy: economyCell(record, iEconomy, header, file),
      item: {
        year: yearCell(record, iYear, header, file),
        row: record.row,
        output: positiveCell(record, iOutput, header, file),
        employment: positiveCell(record, iEmp, header, file),
        hours: positiveCell(record, iHours, header, file),
        humanCapital: positiveCell(record, iHc, header, file),
        capitalServices: positiveCell(record, iK, header, file),
        labourShare: share,
      },
    });
  }
  if (items.length === 0) throw new InputFileError(`${file}: the file has a header but no data rows.`, file, null, null);
  const groups = groupByEconomy(items, file, 2);
  const economies = new Map<string, readonly NationalAccountsRow[]>();
  for (const economy of [...groups.keys()].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0))) {
    economies.set(
      economy,
      Object.freeze(groups.get(economy)!.map(({ row: _row, ...rest }) => Object.freeze(rest))),
    );
  }
  return Object.freeze({ economies, rows: records.length });
}
