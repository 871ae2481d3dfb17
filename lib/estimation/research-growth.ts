/**
 * Growth of research labour, n, from an annual series of researchers (full-time equivalents).
 * Pure functions; inputs are never mutated.
 */

/**
 * How n is measured over the trailing window:
 * - "endpoints" (default, the reference definition): (ln R_t1 - ln R_t0) / (t1 - t0), t1 the last
 *   year with data, t0 the earliest year with data in [t1 - window, t1); with complete data it is
 *   the mean of the last `window` annual log changes.
 * - "log-trend": the OLS slope of ln R on the year over the years with data in [t1 - window, t1].
 */
export type ResearchGrowthMethod = "endpoints" | "log-trend";

/** Options of researchGrowth. */
export interface ResearchGrowthOptions {
  /** Trailing window in years (positive integer). Default 10. */
  window?: number;
  /** Default "endpoints". */
  method?: ResearchGrowthMethod;
}

/** Research-labour growth with what it rests on. */
export interface ResearchGrowth {
  /** Growth rate of researchers, per year, in log points; null (with a warning) with fewer than 2 points. */
  n: number | null;
  /** First year used (earliest year with data in the window); null when n is null. */
  t0: number | null;
  /** Last year with researcher data; null when there is none. */
  t1: number | null;
  /** Years whose values entered n: [t0, t1] for "endpoints", every year with data for "log-trend". */
  yearsUsed: number[];
  method: ResearchGrowthMethod;
  window: number;
  warnings: string[];
}

/**
 * Growth rate n of research labour over a trailing window (see ResearchGrowthMethod for the two
 * definitions). Missing values are null and skipped; a published zero is skipped with a warning
 * (its log is undefined). Warns when the window is not fully covered and when the latest figure
 * is older than the end of the series.
 * Throws RangeError when years and researchers differ in length, a year is not an integer, years
 * are not strictly increasing, a value is negative, NaN or infinite, or window is not a positive integer.
 * Example: researchGrowth([2000, 2005, 2010], [100, null, 150]) ->
 *   { n: 0.04054651081081637, t0: 2000, t1: 2010, yearsUsed: [2000, 2010], method: "endpoints", window: 10, warnings: [] }
 * Reference: common practice (a trailing average of research-labour growth over a stated window);
 *   DOMAIN.md section 3.
 */
export function researchGrowth(
  years: readonly number[],
  researchers: readonly (number | null)[] | Float64Array,
  options?: ResearchGrowthOptions,
): ResearchGrowth {
  const where = "researchGrowth";
  const window = options?.window ?? 10;
  const method = options?.method ?? "endpoints";
  if (!Number.isInteger(window) || window < 1) throw new RangeError(`${where}: window must be a positive integer, got ${window}`);
  if (method !== "endpoints" && method !== "log-trend") throw new RangeError(`${where}: unknown method "${String(method)}" (use "endpoints" or "log-trend")`);
  checkYears(where, years, researchers.length, "researchers");
  const warnings: string[] = [];
  // The latest year with a positive figure ends the window: only years from t1 - window on are
  // kept (every value is still checked, and every zero reported).
  let latest = -1;
  for (let i = years.length - 1; i >= 0 && latest < 0; i--) if (researchers[i] !== null && (researchers[i] as number) > 0) latest = i;
  const from = latest >= 0 ? years[latest] - window : Infinity;
  const points: { year: number; log: number }[] = [];
  for (let i = 0; i < years.length; i++) {
    const value = researchers[i];
    if (value === null) continue;
    checkValue(where, "researchers", years[i], value);
    if (value === 0) {
      warnings.push(`researchers in ${years[i]} is 0: left out (its log is undefined)`);
      continue;
    }
    if (years[i] >= from) points.push({ year: years[i], log: Math.log(value) });
  }
  const none = { n: null, t0: null, method, window };
  if (points.length === 0) {
    warnings.push("no year has researcher data: n cannot be computed");
    return { ...none, t1: null, yearsUsed: [], warnings };
  }
  const last = points[points.length - 1];
  const t1 = last.year;
  if (years.length > 0 && t1 < years[years.length - 1]) {
    warnings.push(`the latest researcher figure is for ${t1}, ${years[years.length - 1] - t1} year(s) before the end of the series`);
  }
  const inWindow = points.filter((p) => p.year >= t1 - window);
  if (inWindow.length < 2) {
    warnings.push(`only one year with researcher data (${t1}) in the ${window}-year window ending ${t1}: n cannot be computed`);
    return { ...none, t1, yearsUsed: [t1], warnings };
  }
  const first = inWindow[0];
  const t0 = first.year;
  if (t1 - t0 < window) {
    warnings.push(`the window ${t1 - window}-${t1} has data from ${t0} only: n spans ${t1 - t0} of ${window} years`);
  }
  if (method === "endpoints") {
    return { n: (last.log - first.log) / (t1 - t0), t0, t1, yearsUsed: [t0, t1], method, window, warnings };
  }
  if (inWindow.length === 2) warnings.push("log-trend from 2 points equals the endpoint rate");
  else if (inWindow.length < window + 1) warnings.push(`${inWindow.length} of ${window + 1} years in the window have data`);
  return { n: olsSlope(inWindow), t0, t1, yearsUsed: inWindow.map((p) => p.year), method, window, warnings };
}

/** Slope of log on year by least squares, centred for accuracy. */
function olsSlope(points: readonly { year: number; log: number }[]): number {
  let meanYear = 0;
  let meanLog = 0;
  for (const p of points) {
    meanYear += p.year;
    meanLog += p.log;
  }
  meanYear /= points.length;
  meanLog /= points.length;
  let sxy = 0;
  let sxx = 0;
  for (const p of points) {
    const dx = p.year - meanYear;
    sxy += dx * (p.log - meanLog);
    sxx += dx * dx;
  }
  return sxy / sxx;
}

/**
 * Researchers (full-time equivalents) from a per-million-inhabitants series:
 * count = per-million x population / 1e6, element by element; null where either is null.
 * Throws RangeError when the arrays differ in length or a value is negative, NaN or infinite.
 * Example: researchersFromPerMillion([4000, null], [330e6, 331e6]) -> [1320000, null]
 * Reference: World Bank WDI SP.POP.SCIE.RD.P6 (researchers in R&D per million people, source UNESCO UIS);
 *   DOMAIN.md section 3.
 */
export function researchersFromPerMillion(
  perMillion: readonly (number | null)[] | Float64Array,
  population: readonly (number | null)[] | Float64Array,
): (number | null)[] {
  const where = "researchersFromPerMillion";
  if (perMillion.length !== population.length) {
    throw new RangeError(`${where}: perMillion has ${perMillion.length} entries but population has ${population.length}`);
  }
  const counts = new Array<number | null>(perMillion.length);
  for (let i = 0; i < perMillion.length; i++) {
    const rate = perMillion[i];
    const people = population[i];
    if (rate !== null) checkValue(where, "perMillion", `entry ${i}`, rate);
    if (people !== null) checkValue(where, "population", `entry ${i}`, people);
    counts[i] = rate === null || people === null ? null : (rate * people) / 1e6;
  }
  return counts;
}

function checkYears(where: string, years: readonly number[], length: number, name: string): void {
  if (years.length !== length) throw new RangeError(`${where}: years has ${years.length} entries but ${name} has ${length}`);
  for (let i = 0; i < years.length; i++) {
    if (!Number.isInteger(years[i])) throw new RangeError(`${where}: years[${i}] = ${years[i]} is not an integer year`);
    if (i > 0 && years[i] <= years[i - 1]) {
      throw new RangeError(`${where}: years must increase strictly, but years[${i}] = ${years[i]} follows ${years[i - 1]}`);
    }
  }
}

function checkValue(where: string, name: string, at: number | string, value: number): void {
  if (typeof value !== "number" || !Number.isFinite(value)) {
    throw new RangeError(`${where}: ${name} in ${at} is ${String(value)}; use null for a missing value`);
  }
  if (value < 0) throw new RangeError(`${where}: ${name} in ${at} is ${value}; it cannot be negative`);
}
