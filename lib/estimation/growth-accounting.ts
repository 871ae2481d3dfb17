/**
 * Growth accounting: TFP growth of one economy from its annual national accounts.
 * Pure functions; inputs are never mutated.
 */

/** One year of an economy's national accounts (null where not published). */
export interface NationalAccountsRow {
  /** Calendar year (integer). */
  year: number;
  /** Real GDP at constant national prices (Penn World Table: rgdpna). */
  output: number | null;
  /** Persons engaged (PWT: emp). */
  employment: number | null;
  /** Average annual hours worked per person engaged (PWT: avh). */
  hours: number | null;
  /** Human capital index per person (PWT: hc). */
  humanCapital: number | null;
  /** Capital services at constant national prices (PWT 9 and later: rkna; not the capital stock rnna). */
  capitalServices: number | null;
  /** Share of labour compensation in GDP, in (0, 1] (PWT: labsh). */
  labourShare: number | null;
}

const LEVEL_FIELDS = ["output", "employment", "hours", "humanCapital", "capitalServices"] as const;
const ALL_FIELDS = [...LEVEL_FIELDS, "labourShare"] as const;
type AccountsField = (typeof ALL_FIELDS)[number];

/** Growth accounting result for one year. */
export interface TfpGrowthYear {
  year: number;
  /** dln A from the previous year to this one; null with a reason when it cannot be computed. */
  tfpGrowth: number | null;
  /** a_t = (labourShare_t + labourShare_{t-1}) / 2, the labour weight used; null with tfpGrowth. */
  labourWeight: number | null;
  /** TFP index, 1 in the first year of its segment; null where this year's inputs are incomplete. */
  tfpIndex: number | null;
  /** Number of the segment (0, 1, ...) the index belongs to; null with tfpIndex. */
  segment: number | null;
  /** Why tfpGrowth is null (first year of a segment, missing input, absent year); null otherwise. */
  reason: string | null;
}

/** Growth accounting for one economy. */
export interface TfpGrowthAccounting {
  years: TfpGrowthYear[];
  /** Number of index segments (stretches of years with complete inputs). */
  segments: number;
  warnings: string[];
}

/**
 * Tornqvist TFP growth by growth accounting, one economy, annual data:
 * dln A_t = dln Y_t - a_t dln(emp_t avh_t hc_t) - (1 - a_t) dln K_t with a_t the average of the
 * labour shares of t and t-1, K capital services. The TFP index cumulates exp(dln A) from the first
 * year with all inputs (index 1 there). After a gap (a year with a missing input, or an absent year)
 * the index restarts at 1 in a new segment, with a warning: levels of different segments are not
 * comparable. tfpGrowth is null, with the reason, where any input of t or t-1 is missing.
 * Throws RangeError when a year is not an integer, years are duplicated or not increasing, a level
 * (output, employment, hours, humanCapital, capitalServices) is not positive, a labour share is
 * outside (0, 1], or a value is NaN or infinite (missing values are null) - naming year and field.
 * Example: tornqvistTfpGrowth([
 *   { year: 2000, output: 100, employment: 10, hours: 2000, humanCapital: 3, capitalServices: 1, labourShare: 0.6 },
 *   { year: 2001, output: 103, employment: 10, hours: 2000, humanCapital: 3, capitalServices: 1.05, labourShare: 0.6 },
 * ]).years[1].tfpGrowth -> 0.010042736573771607   (ln 1.03 - 0.4 ln 1.05)
 * Reference: Feenstra, Inklaar & Timmer (2015), "The Next Generation of the Penn World Table",
 *   AER 105(10): reproduces PWT 10.01 rtfpna growth to 1e-4 a year (shared/data/README.md, verified).
 */
export function tornqvistTfpGrowth(rows: readonly NationalAccountsRow[]): TfpGrowthAccounting {
  validateRows(rows);
  const years: TfpGrowthYear[] = [];
  const warnings: string[] = [];
  let segments = 0;
  let index = 0;
  for (let i = 0; i < rows.length; i++) {
    const row = rows[i];
    const missingNow = missingFields(row);
    if (missingNow.length > 0) {
      years.push({ year: row.year, tfpGrowth: null, labourWeight: null, tfpIndex: null, segment: null, reason: `missing ${missingNow.join(", ")} in ${row.year}` });
      continue;
    }
    const previous = i > 0 ? rows[i - 1] : null;
    let reason: string | null = null;
    if (previous === null) reason = "first year of the series";
    else if (previous.year !== row.year - 1) reason = `no row for ${row.year - 1}`;
    else {
      const missingBefore = missingFields(previous);
      if (missingBefore.length > 0) reason = `missing ${missingBefore.join(", ")} in ${previous.year}`;
    }
    if (reason !== null) {
      // Start a new segment: index 1 here.
      if (segments > 0) {
        const lastIndexed = findLastIndexedYear(years);
        warnings.push(`TFP index restarts at 1 in ${row.year} after a gap since ${lastIndexed}: levels before and after are not comparable`);
      }
      index = 1;
      years.push({ year: row.year, tfpGrowth: null, labourWeight: null, tfpIndex: index, segment: segments, reason });
      segments++;
      continue;
    }
    const now = row as CompleteRow;
    const then = previous as CompleteRow;
    const labourWeight = (now.labourShare + then.labourShare) / 2;
    const dlnOutput = Math.log(now.output / then.output);
    const dlnLabour =
      Math.log(now.employment / then.employment) + Math.log(now.hours / then.hours) + Math.log(now.humanCapital / then.humanCapital);
    const dlnCapital = Math.log(now.capitalServices / then.capitalServices);
    const tfpGrowth = dlnOutput - labourWeight * dlnLabour - (1 - labourWeight) * dlnCapital;
    index *= Math.exp(tfpGrowth);
    years.push({ year: row.year, tfpGrowth, labourWeight, tfpIndex: index, segment: segments - 1, reason: null });
  }
  return { years, segments, warnings };
}

type CompleteRow = { [K in AccountsField]: number } & { year: number };

function missingFields(row: NationalAccountsRow): AccountsField[] {
  return ALL_FIELDS.filter((field) => row[field] === null);
}

function findLastIndexedYear(years: readonly TfpGrowthYear[]): number {
  for (let i = years.length - 1; i >= 0; i--) if (years[i].tfpIndex !== null) return years[i].year;
  return Number.NaN;
}

function validateRows(rows: readonly NationalAccountsRow[]): void {
  const where = "tornqvistTfpGrowth";
  for (let i = 0; i < rows.length; i++) {
    const row = rows[i];
    if (!Number.isInteger(row.year)) throw new RangeError(`${where}: row ${i} has year ${row.year}, not an integer`);
    if (i > 0) {
      const before = rows[i - 1].year;
      if (row.year === before) throw new RangeError(`${where}: year ${row.year} appears twice (rows ${i - 1} and ${i})`);
      if (row.year < before) throw new RangeError(`${where}: years must increase, but row ${i} has ${row.year} after ${before}`);
    }
    for (const field of ALL_FIELDS) {
      const value = row[field];
      if (value === null) continue;
      if (typeof value !== "number" || !Number.isFinite(value)) {
        throw new RangeError(`${where}: ${field} in ${row.year} is ${String(value)}; use null for a missing value`);
      }
      if (field === "labourShare") {
        if (!(value > 0 && value <= 1)) throw new RangeError(`${where}: labourShare in ${row.year} is ${value}, outside (0, 1]`);
      } else if (!(value > 0)) {
        throw new RangeError(`${where}: ${field} in ${row.year} is ${value}; levels must be positive`);
      }
    }
  }
}
