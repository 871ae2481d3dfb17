/**
 * SDMX reporting periods: recognise, validate and normalise the time values of statistical data.
 *
 * Accepted forms (SDMX 2.1 SDMXCommon.xsd, ObservationalTimePeriodType: xs:gYear, xs:gYearMonth,
 * xs:date, xs:dateTime, the reporting periods ReportingYear/Semester/Trimester/Quarter/Month/
 * Week/Day, and TimeRangeType), each with the optional time zone ("Z" or +hh:mm) the schema allows:
 *
 *   2019            Gregorian year              -> "2019"        A
 *   2019-A1         reporting year              -> "2019"        A
 *   2019-S1         reporting semester (P6M)    -> "2019-S1"     S
 *   2019-T2         reporting trimester (P4M)   -> "2019-T2"     T
 *   2019-Q3         reporting quarter (P3M)     -> "2019-Q3"     Q
 *   2019-07         Gregorian year-month        -> "2019-07"     M
 *   2019-M07        reporting month             -> "2019-07"     M
 *   2019-W05        reporting week (ISO 8601)   -> "2019-W05"    W
 *   2019-01-18      Gregorian day               -> "2019-01-18"  D
 *   2019-D018       reporting day (001-366)     -> "2019-01-18"  D
 *   2019-01-18T10:00:00  date-time              -> unchanged     DT
 *   2019-01-01/P1Y  time range (start/duration) -> unchanged     R
 *
 * Reporting periods are read with the default reporting-year start day, January 1 (the schema:
 * "In the absence of a start day for the reporting year, a day of January 1 is assumed"), so a
 * reporting year, month or day coincides with the calendar one and is normalised to it. A time
 * zone on a period is accepted and dropped from the canonical form (it does not change which
 * period is meant for annual, quarterly or monthly data).
 *
 * With `lenient: true` the compact forms some agencies publish outside SDMX are also read:
 * "2019Q3", "2019M07", "2019S1", "2019W05" (World Bank API dates, some JSON-stat time ids).
 */

/** Frequency of a period: SDMX CL_FREQ letters, plus T (trimester), DT (instant) and R (range). */
export type PeriodFrequency = "A" | "S" | "T" | "Q" | "M" | "W" | "D" | "DT" | "R";

export interface ParsedPeriod {
  /** Canonical text, e.g. "2019", "2019-Q3", "2019-07", "2019-W05", "2019-01-18". */
  readonly canonical: string;
  readonly frequency: PeriodFrequency;
  /** First day of the period, ISO date "YYYY-MM-DD" (proleptic Gregorian, UTC). */
  readonly start: string;
  /** Last day of the period (inclusive), ISO date. */
  readonly end: string;
}

/** Why a text is not a period: the form is unknown, or the form is known but a number is out of range. */
export interface PeriodProblem {
  readonly problem: "PERIOD_UNKNOWN_FORMAT" | "PERIOD_INVALID";
  readonly reason: string;
}

export interface ParsePeriodOptions {
  /** Also read compact non-SDMX forms: 2019Q3, 2019M07, 2019S1, 2019W05. Default false. */
  readonly lenient?: boolean;
}

const TZ = "(?:Z|[+-](?:14:00|(?:0\\d|1[0-3]):[0-5]\\d))?";
const YEAR_RE = new RegExp(`^(\\d{4})${TZ}$`);
const YEAR_MONTH_RE = new RegExp(`^(\\d{4})-(\\d{2})${TZ}$`);
const DATE_RE = new RegExp(`^(\\d{4})-(\\d{2})-(\\d{2})${TZ}$`);
const REPORTING_RE = new RegExp(`^(\\d{4})-([ASTQMWD])(\\d{1,3})${TZ}$`);
const COMPACT_RE = /^(\d{4})([SQMW])(\d{1,2})$/;
const DATETIME_RE = new RegExp(`^(\\d{4})-(\\d{2})-(\\d{2})T(\\d{2}):(\\d{2}):(\\d{2})(?:\\.\\d+)?${TZ}$`);
const RANGE_RE = new RegExp(
  `^(\\d{4}-\\d{2}-\\d{2}(?:T\\d{2}:\\d{2}:\\d{2}(?:\\.\\d+)?)?${TZ})/(P(?:(\\d+)Y)?(?:(\\d+)M)?(?:(\\d+)W)?(?:(\\d+)D)?(?:T(?:\\d+H)?(?:\\d+M)?(?:\\d+(?:\\.\\d+)?S)?)?)$`,
);

/** Digits required after each reporting-period letter (SDMX 2.1: A1, S1, T1, Q1, M01, W01, D001). */
const REPORTING_DIGITS: Record<string, number> = { A: 1, S: 1, T: 1, Q: 1, M: 2, W: 2, D: 3 };

function pad2(n: number): string {
  return n < 10 ? `0${n}` : String(n);
}

function isoDate(y: number, m: number, d: number): string {
  return `${String(y).padStart(4, "0")}-${pad2(m)}-${pad2(d)}`;
}

function isLeap(y: number): boolean {
  return (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0;
}

function daysInMonth(y: number, m: number): number {
  return m === 2 ? (isLeap(y) ? 29 : 28) : [4, 6, 9, 11].includes(m) ? 30 : 31;
}

/** Date of UTC day number `t` (ms since epoch) as ISO. */
function isoFromUtc(t: number): string {
  const d = new Date(t);
  return isoDate(d.getUTCFullYear(), d.getUTCMonth() + 1, d.getUTCDate());
}

function utc(y: number, m: number, d: number): number {
  const t = new Date(0);
  t.setUTCFullYear(y, m - 1, d);
  t.setUTCHours(0, 0, 0, 0);
  return t.getTime();
}

const DAY_MS = 86_400_000;

/** Monday of ISO 8601 week 1 of year y: the week that contains January 4. */
function isoWeekOneMonday(y: number): number {
  const jan4 = utc(y, 1, 4);
  const weekday = (new Date(jan4).getUTCDay() + 6) % 7; // Monday = 0
  return jan4 - weekday * DAY_MS;
}

/** Number of ISO 8601 weeks in year y (52 or 53). */
export function isoWeeksInYear(y: number): number {
  return (isoWeekOneMonday(y + 1) - isoWeekOneMonday(y)) / (7 * DAY_MS);
}

function monthSpan(y: number, firstMonth: number, months: number): { start: string; end: string } {
  const lastMonth = firstMonth + months - 1;
  return { start: isoDate(y, firstMonth, 1), end: isoDate(y, lastMonth, daysInMonth(y, lastMonth)) };
}

function reporting(year: number, letter: string, n: number, text: string): ParsedPeriod | PeriodProblem {
  switch (letter) {
    case "A":
      if (n !== 1) return { problem: "PERIOD_INVALID", reason: `a reporting year is always A1, not A${n}` };
      return { canonical: String(year).padStart(4, "0"), frequency: "A", ...monthSpan(year, 1, 12) };
    case "S":
      if (n < 1 || n > 2) return { problem: "PERIOD_INVALID", reason: `semester ${n} is not 1 or 2` };
      return { canonical: `${year}-S${n}`, frequency: "S", ...monthSpan(year, n * 6 - 5, 6) };
    case "T":
      if (n < 1 || n > 3) return { problem: "PERIOD_INVALID", reason: `trimester ${n} is not 1, 2 or 3` };
      return { canonical: `${year}-T${n}`, frequency: "T", ...monthSpan(year, n * 4 - 3, 4) };
    case "Q":
      if (n < 1 || n > 4) return { problem: "PERIOD_INVALID", reason: `quarter ${n} is not between 1 and 4` };
      return { canonical: `${year}-Q${n}`, frequency: "Q", ...monthSpan(year, n * 3 - 2, 3) };
    case "M":
      if (n < 1 || n > 12) return { problem: "PERIOD_INVALID", reason: `month ${n} is not between 01 and 12` };
      return { canonical: `${year}-${pad2(n)}`, frequency: "M", ...monthSpan(year, n, 1) };
    case "W": {
      const weeks = isoWeeksInYear(year);
      if (n < 1 || n > weeks) return { problem: "PERIOD_INVALID", reason: `week ${n} is not between 01 and ${weeks} in ${year}` };
      const monday = isoWeekOneMonday(year) + (n - 1) * 7 * DAY_MS;
      return { canonical: `${year}-W${pad2(n)}`, frequency: "W", start: isoFromUtc(monday), end: isoFromUtc(monday + 6 * DAY_MS) };
    }
    case "D": {
      const days = isLeap(year) ? 366 : 365;
      if (n < 1 || n > days) return { problem: "PERIOD_INVALID", reason: `day ${n} is not between 001 and ${days} in ${year}` };
      const day = isoFromUtc(utc(year, 1, 1) + (n - 1) * DAY_MS);
      return { canonical: day, frequency: "D", start: day, end: day };
    }
    default:
      return { problem: "PERIOD_UNKNOWN_FORMAT", reason: `'${text}' is not an SDMX reporting period` };
  }
}

function date(y: number, m: number, d: number): PeriodProblem | string {
  if (m < 1 || m > 12) return { problem: "PERIOD_INVALID", reason: `month ${pad2(m)} is not between 01 and 12` };
  if (d < 1 || d > daysInMonth(y, m)) return { problem: "PERIOD_INVALID", reason: `day ${pad2(d)} does not exist in ${y}-${pad2(m)}` };
  return isoDate(y, m, d);
}

/**
 * Parse an SDMX time period.
 *
 * Returns the canonical form, frequency and first/last day, or a PeriodProblem saying whether the
 * form is unknown (PERIOD_UNKNOWN_FORMAT) or a number in a known form is out of range
 * (PERIOD_INVALID). Never throws.
 *
 * Example: parsePeriod("2019-M07") -> { canonical: "2019-07", frequency: "M", start: "2019-07-01", end: "2019-07-31" }
 *
 * Reference: SDMX 2.1 Technical Standards, SDMXCommon.xsd ObservationalTimePeriodType and the
 * Reporting*Type definitions; ISO 8601 week dates for ReportingWeekType.
 */
export function parsePeriod(text: string, options: ParsePeriodOptions = {}): ParsedPeriod | PeriodProblem {
  let m = YEAR_RE.exec(text);
  if (m) {
    const y = Number(m[1]);
    return { canonical: m[1]!, frequency: "A", ...monthSpan(y, 1, 12) };
  }
  m = REPORTING_RE.exec(text);
  if (m) {
    const letter = m[2]!;
    const digits = m[3]!;
    if (digits.length !== REPORTING_DIGITS[letter]) {
      return {
        problem: "PERIOD_UNKNOWN_FORMAT",
        reason: `'${text}': ${letter} periods take ${REPORTING_DIGITS[letter]} digit(s), as in ${letter === "M" ? "2019-M07" : letter === "W" ? "2019-W05" : letter === "D" ? "2019-D018" : `2019-${letter}1`}`,
      };
    }
    return reporting(Number(m[1]), letter, Number(digits), text);
  }
  m = YEAR_MONTH_RE.exec(text);
  if (m) {
    const y = Number(m[1]);
    const mo = Number(m[2]);
    if (mo < 1 || mo > 12) return { problem: "PERIOD_INVALID", reason: `month ${m[2]} is not between 01 and 12` };
    return { canonical: `${m[1]}-${m[2]}`, frequency: "M", ...monthSpan(y, mo, 1) };
  }
  m = DATE_RE.exec(text);
  if (m) {
    const d = date(Number(m[1]), Number(m[2]), Number(m[3]));
    if (typeof d !== "string") return d;
    return { canonical: d, frequency: "D", start: d, end: d };
  }
  m = DATETIME_RE.exec(text);
  if (m) {
    const d = date(Number(m[1]), Number(m[2]), Number(m[3]));
    if (typeof d !== "string") return d;
    const h = Number(m[4]);
    const mi = Number(m[5]);
    const s = Number(m[6]);
    if (h > 24 || mi > 59 || s > 60 || (h === 24 && (mi > 0 || s > 0))) {
      return { problem: "PERIOD_INVALID", reason: `time ${m[4]}:${m[5]}:${m[6]} is not a valid time of day` };
    }
    return { canonical: text, frequency: "DT", start: d, end: d };
  }
  m = RANGE_RE.exec(text);
  if (m) {
    const startText = m[1]!;
    const sy = Number(startText.slice(0, 4));
    const sm = Number(startText.slice(5, 7));
    const sd = Number(startText.slice(8, 10));
    const d = date(sy, sm, sd);
    if (typeof d !== "string") return d;
    if (m[2] === "P" || m[2] === "PT") return { problem: "PERIOD_INVALID", reason: `'${text}': the duration is empty` };
    const years = Number(m[3] ?? 0);
    const months = Number(m[4] ?? 0);
    const days = Number(m[5] ?? 0) * 7 + Number(m[6] ?? 0);
    let end = d;
    if (years || months || days) {
      const t = new Date(utc(sy, sm, sd));
      t.setUTCMonth(t.getUTCMonth() + years * 12 + months);
      end = isoFromUtc(t.getTime() + (days - 1) * DAY_MS);
    }
    return { canonical: text, frequency: "R", start: d, end };
  }
  if (options.lenient) {
    m = COMPACT_RE.exec(text);
    if (m) {
      const letter = m[2]!;
      const digits = m[3]!;
      if (letter === "M" || letter === "W") {
        if (digits.length !== 2) return { problem: "PERIOD_UNKNOWN_FORMAT", reason: `'${text}': ${letter} periods take 2 digits` };
      } else if (digits.length !== 1) {
        return { problem: "PERIOD_UNKNOWN_FORMAT", reason: `'${text}': ${letter} periods take 1 digit` };
      }
      return reporting(Number(m[1]), letter, Number(digits), text);
    }
  }
  return {
    problem: "PERIOD_UNKNOWN_FORMAT",
    reason: `'${text}' is not an SDMX time period (2019, 2019-Q3, 2019-07, 2019-M07, 2019-S1, 2019-T1, 2019-W05, 2019-01-18, 2019-D018, a date-time or start/duration)`,
  };
}

/** Type guard: did parsePeriod succeed? */
export function isParsedPeriod(p: ParsedPeriod | PeriodProblem): p is ParsedPeriod {
  return (p as ParsedPeriod).canonical !== undefined;
}

/**
 * A small cache in front of parsePeriod: statistical payloads repeat the same few hundred
 * periods millions of times. Cleared when it grows past `limit` distinct texts.
 */
export class PeriodCache {
  private readonly map = new Map<string, ParsedPeriod | PeriodProblem>();
  private readonly options: ParsePeriodOptions;
  private readonly limit: number;

  constructor(options: ParsePeriodOptions = {}, limit = 50_000) {
    this.options = options;
    this.limit = limit;
  }

  get(text: string): ParsedPeriod | PeriodProblem {
    let p = this.map.get(text);
    if (p === undefined) {
      p = parsePeriod(text, this.options);
      if (this.map.size >= this.limit) this.map.clear();
      this.map.set(text, p);
    }
    return p;
  }
}
