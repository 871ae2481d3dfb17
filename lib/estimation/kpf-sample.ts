/**
 * Estimation samples of the knowledge production function: from an economy's annual series
 * (researchers R, TFP A, population, capital K) to the rows a regression uses, following the
 * spec's form, smoothing, input lag and non-positive growth policy, with every dropped year
 * counted. Pure functions; inputs are never mutated.
 */
import type { KpfSpec } from "./kpf-spec";

/** One economy's annual data (null where not published). Years strictly increasing integers. */
export interface KpfEconomySeries {
  /** Economy code (e.g. ISO 3166-1 alpha-3). */
  readonly economy: string;
  readonly years: readonly number[];
  /** Research labour (full-time equivalents), positive or null. */
  readonly researchers: readonly (number | null)[];
  /** TFP level (an index), positive or null. */
  readonly tfp: readonly (number | null)[];
  /** Population, positive or null (optional; used when n is measured from population). */
  readonly population?: readonly (number | null)[];
  /** Capital (e.g. PWT rkna), positive or null (capital-augmented form only). */
  readonly capital?: readonly (number | null)[];
}

/** Several economies; codes unique. */
export type KpfPanel = readonly KpfEconomySeries[];

/** One regression observation. */
export interface KpfSampleRow {
  readonly economy: string;
  /** Year the observation is dated (end of the growth span; the year of A_t in the levels forms). */
  readonly year: number;
  /** Year growth is measured from (t - 1, the span start, the window start); = year in cointegration. */
  readonly fromYear: number;
  /** Year of the inputs: fromYear + 1 - L (growth forms, levels-nls), year - L (cointegration). */
  readonly inputYear: number;
  /** Smoothed TFP growth g (log points per year; growth forms), A_t - A_{t-1} (levels-nls), or NaN (cointegration). */
  readonly growth: number;
  /** ln A_t at the observation year (levels-nls, cointegration); NaN in the growth forms. */
  readonly lnAt: number;
  readonly lnR: number;
  readonly lnA: number;
  /** ln K at the input year; NaN unless capital-augmented. */
  readonly lnK: number;
  /** Dynamic OLS: changes of ln R at inputYear + j, j = -p..p (empty otherwise). */
  readonly leadsLags: readonly number[];
}

/** The sample of one economy with what was dropped and why. */
export interface KpfSample {
  readonly economy: string;
  readonly rows: readonly KpfSampleRow[];
  /** Observations that had the growth they need (before the positivity and input checks). */
  readonly candidates: number;
  /** Years (observation dates) dropped because smoothed growth was zero or negative (growth forms). */
  readonly nonPositiveYears: readonly number[];
  /** Years with zero or negative annual TFP change (informational in levels-nls; not dropped there). */
  readonly nonPositiveAnnualChanges: number;
  /** Years dropped because an input (R, A, K at the input year, or a lead/lag) is missing. */
  readonly missingInputYears: readonly number[];
  readonly warnings: readonly string[];
}

/**
 * Checks an economy's series; throws RangeError naming the economy, the year and the field for a
 * mismatch of lengths, a non-integer or non-increasing year, a value that is not a positive finite
 * number (null is missing), or an empty code.
 * Example: validateKpfSeries({ economy: "XAA", years: [2000], researchers: [-1], tfp: [1] }) throws
 *   "XAA: researchers in 2000 is -1; levels must be positive (null for missing)".
 * Reference: none (input checks).
 */
export function validateKpfSeries(series: KpfEconomySeries): void {
  const code = series?.economy;
  if (typeof code !== "string" || code.length === 0) throw new RangeError(`economy code must be a non-empty string, got ${JSON.stringify(code)}`);
  const years = series.years;
  if (!Array.isArray(years)) throw new RangeError(`${code}: years must be an array`);
  const names = ["researchers", "tfp", "population", "capital"] as const;
  const fields = [series.researchers, series.tfp, series.population, series.capital];
  for (let f = 0; f < fields.length; f++) {
    const values = fields[f];
    if (values === undefined && f >= 2) continue; // population and capital are optional
    if (values === undefined || values.length !== years.length) {
      throw new RangeError(`${code}: ${names[f]} has ${values?.length ?? 0} values but years has ${years.length}`);
    }
  }
  for (let i = 0; i < years.length; i++) {
    if (!Number.isInteger(years[i])) throw new RangeError(`${code}: year ${years[i]} (position ${i}) is not an integer`);
    if (i > 0 && years[i] <= years[i - 1]) {
      throw new RangeError(`${code}: years must increase strictly, but ${years[i]} follows ${years[i - 1]}`);
    }
  }
  for (let f = 0; f < fields.length; f++) {
    const values = fields[f];
    if (values === undefined) continue;
    for (let i = 0; i < years.length; i++) {
      const v = values[i];
      if (v !== null && !(typeof v === "number" && v > 0 && v < Infinity)) {
        throw new RangeError(`${code}: ${names[f]} in ${years[i]} is ${String(v)}; levels must be positive (null for missing)`);
      }
    }
  }
}

/**
 * Checks a panel: every series as validateKpfSeries, codes unique, at least one economy.
 * Throws RangeError naming the economy. Example: validateKpfPanel([]) throws "the panel has no economies".
 * Reference: none (input checks).
 */
export function validateKpfPanel(panel: KpfPanel): void {
  if (!Array.isArray(panel) || panel.length === 0) throw new RangeError("the panel has no economies");
  const seen = new Set<string>();
  for (const series of panel) {
    validateKpfSeries(series);
    if (seen.has(series.economy)) throw new RangeError(`economy ${series.economy} appears twice in the panel`);
    seen.add(series.economy);
  }
}

/** Year-indexed access to one series. */
class YearIndex {
  private readonly first: number;
  private readonly position: Int32Array;
  constructor(readonly years: readonly number[]) {
    this.first = years.length > 0 ? years[0] : 0;
    const span = years.length > 0 ? years[years.length - 1] - this.first + 1 : 0;
    this.position = new Int32Array(span).fill(-1);
    for (let i = 0; i < years.length; i++) this.position[years[i] - this.first] = i;
  }
  /** Value of `values` in `year`, or null when the year is absent or the value missing. */
  at(values: readonly (number | null)[] | undefined, year: number): number | null {
    if (values === undefined) return null;
    const k = year - this.first;
    if (k < 0 || k >= this.position.length) return null;
    const i = this.position[k];
    return i < 0 ? null : values[i];
  }
}

/**
 * Hodrick-Prescott trend: tau minimising sum (y_t - tau_t)^2 + lambda sum (tau_{t+1} - 2 tau_t + tau_{t-1})^2,
 * i.e. the solution of (I + lambda D'D) tau = y with D the second-difference matrix, solved by a
 * banded LDL' factorisation (bandwidth 2). Needs at least 3 values.
 * Throws RangeError for fewer than 3 values, a non-finite value or lambda <= 0.
 * Example: hodrickPrescottTrend([1, 2, 3, 4], 100) -> [1, 2, 3, 4] (a line is its own trend, to rounding)
 * Reference: R. J. Hodrick and E. C. Prescott (1997), "Postwar U.S. business cycles: an empirical
 * investigation", J. Money, Credit and Banking 29(1), 1-16; M. O. Ravn and H. Uhlig (2002), Rev.
 * Economics and Statistics 84(2), 371-376 (lambda for annual data).
 */
export function hodrickPrescottTrend(values: ArrayLike<number>, lambda: number): Float64Array {
  const n = values.length;
  if (n < 3) throw new RangeError(`hodrickPrescottTrend: needs at least 3 values, got ${n}`);
  if (!(lambda > 0) || !Number.isFinite(lambda)) throw new RangeError(`hodrickPrescottTrend: lambda must be positive, got ${lambda}`);
  for (let i = 0; i < n; i++) if (!Number.isFinite(values[i])) throw new RangeError(`hodrickPrescottTrend: value ${i} is not finite: ${values[i]}`);
  // Bands of M = I + lambda D'D: diagonal d0, first off-diagonal d1, second d2.
  const d0 = new Float64Array(n);
  const d1 = new Float64Array(n);
  const d2 = new Float64Array(n);
  for (let r = 0; r < n - 2; r++) {
    // Row r of D: +1 at r, -2 at r+1, +1 at r+2.
    const idx = [r, r + 1, r + 2];
    const coef = [1, -2, 1];
    for (let a = 0; a < 3; a++) {
      for (let b = a; b < 3; b++) {
        const v = lambda * coef[a] * coef[b];
        const lo = idx[a];
        const off = idx[b] - idx[a];
        if (off === 0) d0[lo] += v;
        else if (off === 1) d1[lo] += v;
        else d2[lo] += v;
      }
    }
  }
  for (let i = 0; i < n; i++) d0[i] += 1;
  // LDL' with unit lower-triangular L of bandwidth 2: l1[i] = L(i+1, i), l2[i] = L(i+2, i).
  const dd = new Float64Array(n);
  const l1 = new Float64Array(n);
  const l2 = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let di = d0[i];
    if (i >= 1) di -= l1[i - 1] * l1[i - 1] * dd[i - 1];
    if (i >= 2) di -= l2[i - 2] * l2[i - 2] * dd[i - 2];
    dd[i] = di;
    if (i + 1 < n) {
      let m = d1[i];
      if (i >= 1) m -= l2[i - 1] * l1[i - 1] * dd[i - 1];
      l1[i] = m / di;
    }
    if (i + 2 < n) l2[i] = d2[i] / di;
  }
  const tau = Float64Array.from(values as ArrayLike<number>);
  for (let i = 0; i < n; i++) {
    if (i >= 1) tau[i] -= l1[i - 1] * tau[i - 1];
    if (i >= 2) tau[i] -= l2[i - 2] * tau[i - 2];
  }
  for (let i = 0; i < n; i++) tau[i] /= dd[i];
  for (let i = n - 1; i >= 0; i--) {
    if (i + 1 < n) tau[i] -= l1[i] * tau[i + 1];
    if (i + 2 < n) tau[i] -= l2[i] * tau[i + 2];
  }
  return tau;
}

interface GrowthObservation {
  year: number;
  fromYear: number;
  growth: number;
}

/** Smoothed growth observations of ln A following the spec (growth forms). */
function growthObservations(series: KpfEconomySeries, index: YearIndex, spec: KpfSpec): GrowthObservation[] {
  const out: GrowthObservation[] = [];
  const { years, tfp } = series;
  const lnA = (year: number): number | null => {
    const a = index.at(tfp, year);
    return a === null ? null : Math.log(a);
  };
  const s = spec.smoothing;
  if (s.kind === "annual") {
    for (const t of years) {
      const now = lnA(t);
      const before = lnA(t - 1);
      if (now !== null && before !== null) out.push({ year: t, fromYear: t - 1, growth: now - before });
    }
    return out;
  }
  if (s.kind === "average") {
    const k = s.years;
    if (s.overlapping) {
      for (const t of years) {
        const now = lnA(t);
        const before = lnA(t - k);
        if (now !== null && before !== null) out.push({ year: t, fromYear: t - k, growth: (now - before) / k });
      }
      return out;
    }
    let last = -Infinity;
    for (let i = years.length - 1; i >= 0; i--) {
      if (tfp[i] !== null) {
        last = years[i];
        break;
      }
    }
    if (last === -Infinity) return out;
    for (let end = last; end - k >= years[0]; end -= k) {
      const now = lnA(end);
      const before = lnA(end - k);
      if (now !== null && before !== null) out.push({ year: end, fromYear: end - k, growth: (now - before) / k });
    }
    return out.reverse();
  }
  if (s.method === "rolling-log-linear") {
    const w = s.years;
    const meanYear = (w - 1) / 2;
    let sxx = 0;
    for (let j = 0; j < w; j++) sxx += (j - meanYear) ** 2;
    for (const t of years) {
      let complete = true;
      let mean = 0;
      const logs = new Array<number>(w);
      for (let j = 0; j < w && complete; j++) {
        const v = lnA(t - w + 1 + j);
        if (v === null) complete = false;
        else {
          logs[j] = v;
          mean += v;
        }
      }
      if (!complete) continue;
      mean /= w;
      let sxy = 0;
      for (let j = 0; j < w; j++) sxy += (j - meanYear) * (logs[j] - mean);
      out.push({ year: t, fromYear: t - w + 1, growth: sxy / sxx });
    }
    return out;
  }
  // HP trend over each run of consecutive years with TFP (at least 4 years).
  let runStart = -1;
  const flush = (endExclusive: number): void => {
    if (runStart < 0) return;
    const length = endExclusive - runStart;
    if (length >= 4) {
      const logs = new Float64Array(length);
      for (let j = 0; j < length; j++) logs[j] = Math.log(tfp[runStart + j] as number);
      const tau = hodrickPrescottTrend(logs, s.lambda);
      for (let j = 1; j < length; j++) out.push({ year: years[runStart + j], fromYear: years[runStart + j - 1], growth: tau[j] - tau[j - 1] });
    }
    runStart = -1;
  };
  for (let i = 0; i < years.length; i++) {
    const consecutive = i > 0 && years[i] === years[i - 1] + 1;
    if (tfp[i] === null) {
      flush(i);
      continue;
    }
    if (runStart >= 0 && !consecutive) flush(i);
    if (runStart < 0) runStart = i;
  }
  flush(years.length);
  return out;
}

const NO_LEADS: readonly number[] = Object.freeze([]);

/**
 * Estimation sample of one economy under a spec.
 * Growth forms (log-linear, capital-augmented): one observation per smoothed growth value g (see
 * KpfSmoothing), kept when g > 0 (else counted in nonPositiveYears: the log is undefined) and when
 * R, A (and K) are present at the input year fromYear + 1 - L (else counted in missingInputYears).
 * With annual growth and L = 1 this is the reference rule: t is used when A_t, A_{t-1} and R_{t-1}
 * are present and A_t > A_{t-1}.
 * levels-nls: every t with A_t, A_{t-1} and R, A at t - L present; negative changes are kept.
 * cointegration: every t with A_t and R_{t-L} present (and, for dynamic OLS with p leads and lags,
 * R at t - L + j - 1 and t - L + j for j = -p..p).
 * Throws RangeError for an invalid series (see validateKpfSeries) or a capital-augmented spec
 * without a capital series.
 * Example: buildKpfSample({ economy: "XAA", years: [2000, 2001, 2002], researchers: [10, 11, 12],
 *   tfp: [1, 1.01, 1.0] }, REFERENCE_SPEC) -> one row (2001, growth ln 1.01), nonPositiveYears [2002]
 * Reference: issue 3 (reference sample rule); DOMAIN.md section 4 (smoothing practice).
 */
export function buildKpfSample(series: KpfEconomySeries, spec: KpfSpec): KpfSample {
  validateKpfSeries(series);
  return buildValidatedSample(series, spec);
}

/**
 * Estimation sample of a series already checked by validateKpfSeries (as buildKpfSample, without
 * a second validation pass; for callers that validated a whole panel once).
 * Throws RangeError for a capital-augmented spec without a capital series; an unchecked invalid
 * series gives undefined results. Example: buildValidatedSample(series, spec) equals buildKpfSample(series, spec).
 * Reference: as buildKpfSample.
 */
export function buildValidatedSample(series: KpfEconomySeries, spec: KpfSpec): KpfSample {
  const index = new YearIndex(series.years);
  const code = series.economy;
  const rows: KpfSampleRow[] = [];
  const nonPositiveYears: number[] = [];
  const missingInputYears: number[] = [];
  const warnings: string[] = [];
  const L = spec.lagYears;
  const capitalForm = spec.form === "capital-augmented";
  if (capitalForm && series.capital === undefined) {
    throw new RangeError(`${code}: the capital-augmented form needs a capital series`);
  }
  let nonPositiveAnnualChanges = 0;
  for (const t of series.years) {
    const now = index.at(series.tfp, t);
    const before = index.at(series.tfp, t - 1);
    if (now !== null && before !== null && !(now > before)) nonPositiveAnnualChanges++;
  }
  let candidates = 0;

  if (spec.form === "log-linear" || spec.form === "capital-augmented") {
    for (const obs of growthObservations(series, index, spec)) {
      candidates++;
      if (!(obs.growth > 0)) {
        nonPositiveYears.push(obs.year);
        continue;
      }
      const inputYear = obs.fromYear + 1 - L;
      const r = index.at(series.researchers, inputYear);
      const a = index.at(series.tfp, inputYear);
      const k = capitalForm ? index.at(series.capital, inputYear) : 1;
      if (r === null || a === null || k === null) {
        missingInputYears.push(obs.year);
        continue;
      }
      rows.push(
        Object.freeze({
          economy: code,
          year: obs.year,
          fromYear: obs.fromYear,
          inputYear,
          growth: obs.growth,
          lnAt: Number.NaN,
          lnR: Math.log(r),
          lnA: Math.log(a),
          lnK: capitalForm ? Math.log(k) : Number.NaN,
          leadsLags: NO_LEADS,
        }),
      );
    }
  } else if (spec.form === "levels-nls") {
    for (const t of series.years) {
      const now = index.at(series.tfp, t);
      const before = index.at(series.tfp, t - 1);
      if (now === null || before === null) continue;
      candidates++;
      const r = index.at(series.researchers, t - L);
      const a = index.at(series.tfp, t - L);
      if (r === null || a === null) {
        missingInputYears.push(t);
        continue;
      }
      rows.push(
        Object.freeze({
          economy: code,
          year: t,
          fromYear: t - 1,
          inputYear: t - L,
          growth: now - before,
          lnAt: Math.log(now),
          lnR: Math.log(r),
          lnA: Math.log(a),
          lnK: Number.NaN,
          leadsLags: NO_LEADS,
        }),
      );
    }
  } else {
    const p = spec.leadsLags;
    for (const t of series.years) {
      const now = index.at(series.tfp, t);
      if (now === null) continue;
      candidates++;
      const inputYear = t - L;
      const r = index.at(series.researchers, inputYear);
      let complete = r !== null;
      const changes: number[] = [];
      for (let j = -p; p > 0 && j <= p && complete; j++) {
        const r1 = index.at(series.researchers, inputYear + j);
        const r0 = index.at(series.researchers, inputYear + j - 1);
        if (r1 === null || r0 === null) complete = false;
        else changes.push(Math.log(r1) - Math.log(r0));
      }
      if (!complete) {
        missingInputYears.push(t);
        continue;
      }
      rows.push(
        Object.freeze({
          economy: code,
          year: t,
          fromYear: t,
          inputYear,
          growth: Number.NaN,
          lnAt: Math.log(now),
          lnR: Math.log(r as number),
          lnA: Math.log(now),
          lnK: Number.NaN,
          leadsLags: p > 0 ? Object.freeze(changes) : NO_LEADS,
        }),
      );
    }
  }
  if (nonPositiveYears.length > 0) {
    warnings.push(
      `${code}: ${nonPositiveYears.length} of ${candidates} growth observations were zero or negative and were dropped (the log of growth is undefined): ${nonPositiveYears.join(", ")}.`,
    );
  }
  if (missingInputYears.length > 0) {
    warnings.push(`${code}: ${missingInputYears.length} observations lack an input at the lagged year and were dropped: ${missingInputYears.join(", ")}.`);
  }
  return Object.freeze({
    economy: code,
    rows: Object.freeze(rows),
    candidates,
    nonPositiveYears: Object.freeze(nonPositiveYears),
    nonPositiveAnnualChanges,
    missingInputYears: Object.freeze(missingInputYears),
    warnings: Object.freeze(warnings),
  });
}
