/**
 * Moving-block bootstrap for time series and panels, and a fast OLS refit on resampled rows.
 *
 * Moving-block bootstrap (Künsch 1989): a resample of T observations is the concatenation of
 * ceil(T/b) blocks of b consecutive observations, each starting at an index drawn uniformly,
 * truncated to T. Two variants, chosen by `circular`:
 *  - non-circular (default, Künsch 1989): block starts in 0..T-b, so a block never wraps; the
 *    first and last b-1 observations are drawn less often than the middle ones;
 *  - circular (Politis & Romano 1992): starts in 0..T-1 and the series wraps around, so every
 *    observation is equally likely.
 * Block length default: round(T^(1/3)) (at least 1), the T^(1/3) rate of the MSE-optimal block
 * length of Politis & White (2004) for variance estimation with a constant of 1 (3 for T = 40,
 * 4 for T = 60), see DOMAIN.md section 4.
 *
 * Random draws: the block starts of one resample are drawn in order, several packed into one
 * `rng.nextInt(S^j)` call (S = number of possible starts, S^j <= 2^26; see BlockStartSampler).
 * `movingBlockIndices`, `movingBlockBootstrap` and `bootstrapOls` consume the generator
 * identically, so the same seed gives the same resamples in all three.
 *
 * References: H. R. Künsch (1989), "The jackknife and the bootstrap for general stationary
 * observations", Annals of Statistics 17(3), 1217-1241; D. N. Politis and J. P. Romano (1992),
 * "A circular block-resampling procedure for stationary data", in Exploring the Limits of
 * Bootstrap, Wiley, 263-270; D. N. Politis and H. White (2004), "Automatic block-length selection
 * for the dependent bootstrap", Econometric Reviews 23(1), 53-70.
 */
import { choleskyInPlace, choleskySolveInPlace, type Matrix } from "./linalg";
import { type EstimationWarning, validateRegressionInput } from "./ols";
import type { Rng } from "./random";

export interface BlockBootstrapOptions {
  /** Block length b (default round(T^(1/3)), at least 1). */
  readonly blockLength?: number;
  /** Circular (wrap-around) blocks; default false (Künsch's moving blocks). */
  readonly circular?: boolean;
}

/**
 * Default block length round(T^(1/3)), at least 1 (Politis & White 2004 rate, constant 1).
 * Throws RangeError when T is not a positive integer.
 * Example: `defaultBlockLength(40)` is 3; `defaultBlockLength(64)` is 4.
 */
export function defaultBlockLength(observations: number): number {
  if (!(Number.isInteger(observations) && observations >= 1)) {
    throw new RangeError(`number of observations must be a positive integer, got ${observations}`);
  }
  return Math.max(1, Math.round(Math.cbrt(observations)));
}

function resolveBlockLength(observations: number, blockLength: number | undefined): number {
  const b = blockLength ?? defaultBlockLength(observations);
  if (!(Number.isInteger(b) && b >= 1)) throw new RangeError(`block length must be a positive integer, got ${b}`);
  if (b > observations) throw new RangeError(`block length ${b} exceeds the ${observations} observations`);
  return b;
}

/**
 * Draws block starts uniformly in [0, starts), packing several into one generator call: one
 * `rng.nextInt(starts^j)` gives j independent uniform digits in base `starts` (j chosen so that
 * starts^j <= 2^26, which keeps pure-rand's rejection rate below 1/64). `reset()` drops unused
 * digits; it is called at the start of every resample so that each resample's draws do not depend
 * on how the previous one ended.
 */
class BlockStartSampler {
  private readonly digitsPerDraw: number;
  private readonly range: number;
  private value = 0;
  private left = 0;
  constructor(
    private readonly rng: Rng,
    private readonly starts: number,
  ) {
    let j = 1;
    let range = starts;
    while (range * starts <= 2 ** 26) {
      range *= starts;
      j++;
    }
    this.digitsPerDraw = starts === 1 ? 1 : j;
    this.range = starts === 1 ? 1 : range;
  }
  reset(): void {
    this.left = 0;
  }
  /**
   * The block starts of one resample: `count` digits into out[0..count), drawn in order (several
   * per generator call, as described above).
   */
  fill(out: Int32Array, count: number): void {
    const starts = this.starts;
    if (starts === 1) {
      out.fill(0, 0, count);
      return;
    }
    let value = this.value;
    let left = this.left;
    for (let c = 0; c < count; c++) {
      if (left === 0) {
        value = this.rng.nextInt(this.range) | 0;
        left = this.digitsPerDraw;
      }
      // value < 2^26: the truncated quotient is exact, and integer arithmetic keeps this fast.
      const quotient = (value / starts) | 0;
      out[c] = value - quotient * starts;
      value = quotient;
      left--;
    }
    this.value = value;
    this.left = left;
  }
}

/**
 * One moving-block resample of the row indices 0..T-1, written into `out` (length T; allocated when
 * not given). Throws RangeError for a bad T, block length or output length.
 * Example: with T = 5, b = 2, non-circular, starts drawn 3, 0, 1 the indices are [3, 4, 0, 1, 1].
 * Reference: Künsch (1989); Politis & Romano (1992) for `circular`.
 */
export function movingBlockIndices(observations: number, rng: Rng, options: BlockBootstrapOptions = {}, out?: Int32Array): Int32Array {
  if (!(Number.isInteger(observations) && observations >= 1)) {
    throw new RangeError(`number of observations must be a positive integer, got ${observations}`);
  }
  const b = resolveBlockLength(observations, options.blockLength);
  const result = out ?? new Int32Array(observations);
  if (result.length < observations) throw new RangeError(`output holds ${result.length} indices but ${observations} are needed`);
  const circular = options.circular ?? false;
  const sampler = new BlockStartSampler(rng, circular ? observations : observations - b + 1);
  fillBlockIndices(observations, b, circular, sampler, result, 0, new Int32Array(Math.ceil(observations / b)));
  return result;
}

/**
 * Writes T resampled indices (0..T-1) into out[offset..offset+T); `starts` is work space for the
 * ceil(T/b) block starts.
 */
function fillBlockIndices(observations: number, b: number, circular: boolean, sampler: BlockStartSampler, out: Int32Array, offset: number, starts: Int32Array): void {
  const blocks = Math.ceil(observations / b);
  sampler.reset();
  sampler.fill(starts, blocks);
  let filled = 0;
  for (let blk = 0; blk < blocks; blk++) {
    const s = starts[blk];
    const len = Math.min(b, observations - filled);
    for (let l = 0; l < len; l++) {
      let idx = s + l;
      if (idx >= observations) idx -= observations;
      out[offset + filled + l] = idx;
    }
    filled += len;
  }
}

/**
 * `draws` moving-block resamples of 0..T-1, row-major: draw d occupies [d*T, (d+1)*T).
 * Throws RangeError for bad arguments.
 */
export function movingBlockBootstrap(observations: number, draws: number, rng: Rng, options: BlockBootstrapOptions = {}): Int32Array {
  if (!(Number.isInteger(draws) && draws >= 0)) throw new RangeError(`draws must be a non-negative integer, got ${draws}`);
  if (!(Number.isInteger(observations) && observations >= 1)) {
    throw new RangeError(`number of observations must be a positive integer, got ${observations}`);
  }
  const b = resolveBlockLength(observations, options.blockLength);
  const out = new Int32Array(draws * observations);
  const circular = options.circular ?? false;
  const sampler = new BlockStartSampler(rng, circular ? observations : observations - b + 1);
  const blockStarts = new Int32Array(Math.ceil(observations / b));
  for (let d = 0; d < draws; d++) fillBlockIndices(observations, b, circular, sampler, out, d * observations, blockStarts);
  return out;
}

export interface OlsBootstrapOptions extends BlockBootstrapOptions {
  /** Number of bootstrap draws (e.g. 999). */
  readonly draws: number;
  /** Seeded generator (see random.ts). */
  readonly rng: Rng;
  /** Column names, default x1, x2, ... */
  readonly names?: readonly string[];
}

/** Result of `bootstrapOls`. */
export interface OlsBootstrapResult {
  /** draws x k, row-major: draw d's coefficients at [d*k, (d+1)*k); NaN rows for failed (singular) draws. */
  readonly coefficients: Float64Array;
  readonly draws: number;
  /** k, number of columns. */
  readonly columns: number;
  readonly names: readonly string[];
  readonly blockLength: number;
  readonly circular: boolean;
  /** Draws whose resampled design was (numerically) singular. */
  readonly failedDraws: number;
  readonly warnings: readonly EstimationWarning[];
}

/**
 * Moving-block (pairs) bootstrap of OLS coefficients: each draw resamples blocks of ROWS of (X, y)
 * and refits by OLS. Built for many small problems (k <= ~6 columns, T <= ~100 rows): nothing is
 * allocated per draw. Before the draws, the columns are centred on their full-sample means (when X
 * has a constant column: an exact reparametrisation, undone afterwards) and scaled to unit norm,
 * and the cross products x_i x_i' and x_i y_i are summed once per possible block; a draw then adds
 * ceil(T/b) such sums and solves the k x k normal equations by Cholesky (written out for k = 3, the
 * log-linear forms). Centring and scaling keep the normal equations well conditioned, so the
 * result equals an OLS refit on the resampled rows to about 1e-12 relative for such designs
 * (checked in bootstrap.test.ts); for ill-conditioned designs use `movingBlockIndices` and `ols`
 * instead.
 *
 * Throws RangeError for mismatched or non-finite inputs, bad draws or block length.
 * Example: `bootstrapOls(X, y, { draws: 999, rng: createRng(1) }).coefficients` holds 999 x k
 * estimates; same seed, same numbers.
 * Reference: Künsch (1989) (moving blocks); Politis & Romano (1992) (circular); the pairs/block
 * bootstrap of regression coefficients, e.g. S. N. Lahiri (2003), Resampling Methods for
 * Dependent Data, Springer, ch. 2.
 */
export function bootstrapOls(design: Matrix, y: Float64Array, options: OlsBootstrapOptions): OlsBootstrapResult {
  validateRegressionInput(design, y, options.names);
  const n = design.rows;
  const k = design.cols;
  if (k === 0) throw new RangeError("X has no columns");
  if (n === 0) throw new RangeError("X has no rows");
  const draws = options.draws;
  if (!(Number.isInteger(draws) && draws >= 0)) throw new RangeError(`draws must be a non-negative integer, got ${draws}`);
  const b = resolveBlockLength(n, options.blockLength);
  const circular = options.circular ?? false;
  const rng = options.rng;
  const names = Object.freeze([...(options.names ?? Array.from({ length: k }, (_, j) => `x${j + 1}`))]);

  // 1. Centre (when there is a constant column) and scale the columns.
  const x = design.data;
  let constantColumn = -1;
  for (let j = 0; j < k && constantColumn < 0; j++) {
    const v0 = x[j * n];
    if (v0 === 0) continue;
    let constant = true;
    for (let i = 1; i < n && constant; i++) if (x[i + j * n] !== v0) constant = false;
    if (constant) constantColumn = j;
  }
  const mean = new Float64Array(k);
  if (constantColumn >= 0) {
    for (let j = 0; j < k; j++) {
      if (j === constantColumn) continue;
      let s = 0;
      for (let i = 0; i < n; i++) s += x[i + j * n];
      mean[j] = s / n;
    }
  }
  const xt = new Float64Array(n * k);
  const scale = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    let ss = 0;
    for (let i = 0; i < n; i++) {
      const v = x[i + j * n] - mean[j];
      xt[i + j * n] = v;
      ss += v * v;
    }
    scale[j] = ss > 0 ? Math.sqrt(ss) : 1;
    for (let i = 0; i < n; i++) xt[i + j * n] /= scale[j];
  }

  // 2. Per-row cross products, packed: lower triangle of x x' (k(k+1)/2) then x y (k).
  const tri = (k * (k + 1)) / 2;
  const m = tri + k;
  const rowProducts = new Float64Array(n * m);
  for (let i = 0; i < n; i++) {
    let p = i * m;
    for (let a = 0; a < k; a++) for (let c = 0; c <= a; c++) rowProducts[p++] = xt[i + a * n] * xt[i + c * n];
    for (let a = 0; a < k; a++) rowProducts[p++] = xt[i + a * n] * y[i];
  }

  // 3. The summands of a draw in one table: the sums over every possible full block, then over
  //    every possible last (possibly shorter) block.
  const starts = circular ? n : n - b + 1;
  const blocksPerDraw = Math.ceil(n / b);
  const fullBlocks = blocksPerDraw - 1;
  const lastBase = starts * m;
  const table = new Float64Array(2 * starts * m);
  addBlockSums(rowProducts, n, m, starts, b, table, 0);
  addBlockSums(rowProducts, n, m, starts, n - fullBlocks * b, table, lastBase);

  // 4. Draws: everything allocated here, nothing per draw.
  const out = new Float64Array(draws * k);
  const plan: OlsDrawPlan = {
    k,
    m,
    fullBlocks,
    lastBase,
    table,
    scale,
    mean,
    constantColumn,
    constantValue: constantColumn >= 0 ? x[constantColumn * n] : 1,
    sampler: new BlockStartSampler(rng, starts),
    blockStarts: new Int32Array(blocksPerDraw),
    sums: new Float64Array(m),
    normal: new Float64Array(k * k),
    rhs: new Float64Array(k),
  };
  const failed = k === 3 ? runOlsDrawsThreeColumns(plan, out, draws) : runOlsDraws(plan, out, draws);
  const warnings: EstimationWarning[] = [];
  if (failed > 0) {
    warnings.push({
      code: "failed-draws",
      message: `${failed} of ${draws} bootstrap draws had a singular resampled design; their coefficients are NaN`,
    });
  }
  return Object.freeze({
    coefficients: out,
    draws,
    columns: k,
    names,
    blockLength: b,
    circular,
    failedDraws: failed,
    warnings: Object.freeze(warnings),
  });
}

/**
 * Sums over the `length` rows of every possible block start s (rows s, s+1, ... wrapping past n)
 * of the packed row products, into table[base + s*m ..].
 */
function addBlockSums(rowProducts: Float64Array, n: number, m: number, starts: number, length: number, table: Float64Array, base: number): void {
  for (let s = 0; s < starts; s++) {
    const off = base + s * m;
    for (let l = 0; l < length; l++) {
      let i = s + l;
      if (i >= n) i -= n;
      const src = i * m;
      for (let q = 0; q < m; q++) table[off + q] += rowProducts[src + q];
    }
  }
}

/** What the draws of `bootstrapOls` need: the summand table, the undoing of the scaling, and work buffers. */
interface OlsDrawPlan {
  readonly k: number;
  /** Values per summand: k(k+1)/2 cross products (packed lower triangle, row by row) then k products with y. */
  readonly m: number;
  /** Full blocks per draw; one last (possibly shorter) block follows. */
  readonly fullBlocks: number;
  /** Where the last-block sums start in `table` (the full-block sums start at 0). */
  readonly lastBase: number;
  readonly table: Float64Array;
  readonly scale: Float64Array;
  readonly mean: Float64Array;
  readonly constantColumn: number;
  readonly constantValue: number;
  readonly sampler: BlockStartSampler;
  readonly blockStarts: Int32Array;
  readonly sums: Float64Array;
  readonly normal: Float64Array;
  readonly rhs: Float64Array;
}

/**
 * The hot loop of `bootstrapOls` for any number of columns: only the draws, with nothing to
 * allocate, so that the engine compiles it quickly and once. Writes draw d's coefficients to
 * out[d*k ..]; returns the number of failed (singular) draws.
 */
function runOlsDraws(plan: OlsDrawPlan, out: Float64Array, draws: number): number {
  const { k, m, fullBlocks, lastBase, table, scale, mean, constantColumn, constantValue, sampler, blockStarts, sums, normal, rhs } = plan;
  let failed = 0;
  for (let d = 0; d < draws; d++) {
    // The draw's summands in block order (full blocks, then the last block), added in that order.
    sampler.reset();
    sampler.fill(blockStarts, fullBlocks + 1);
    for (let q = 0; q < m; q++) {
      let sum = 0;
      for (let c = 0; c < fullBlocks; c++) sum += table[blockStarts[c] * m + q];
      sums[q] = sum + table[lastBase + blockStarts[fullBlocks] * m + q];
    }
    let p = 0;
    for (let a = 0; a < k; a++) for (let c = 0; c <= a; c++) normal[a + c * k] = sums[p++];
    for (let a = 0; a < k; a++) rhs[a] = sums[p++];
    const base = d * k;
    if (!choleskyInPlace(normal, k, 1e-10)) {
      failed++;
      for (let j = 0; j < k; j++) out[base + j] = Number.NaN;
      continue;
    }
    choleskySolveInPlace(normal, k, rhs);
    // Undo the scaling and the centring.
    let interceptShift = 0;
    for (let j = 0; j < k; j++) {
      const coefficient = rhs[j] / scale[j];
      out[base + j] = coefficient;
      if (j !== constantColumn) interceptShift += mean[j] * coefficient;
    }
    if (constantColumn >= 0) out[base + constantColumn] -= interceptShift / constantValue;
  }
  return failed;
}

/**
 * `runOlsDraws` written out for three columns (the log-linear forms: constant, ln R, ln A), the
 * case of nearly every fit: the same additions in the same order and the same Cholesky
 * factorisation and solves (choleskyInPlace with tolerance 1e-10, choleskySolveInPlace) in scalar
 * variables, so the results equal the general loop's bit for bit (all 1.2 million coefficients
 * of the 200 x 45 benchmark panel were compared when it was written; bootstrap.test.ts checks both
 * loops against QR refits), at about half the cost in a fresh process.
 */
function runOlsDrawsThreeColumns(plan: OlsDrawPlan, out: Float64Array, draws: number): number {
  const { fullBlocks, lastBase, table, scale, mean, constantColumn, constantValue, sampler, blockStarts } = plan;
  const scale0 = scale[0];
  const scale1 = scale[1];
  const scale2 = scale[2];
  // The intercept shift leaves out the constant column's own term (its mean is 0).
  const mean0 = mean[0];
  const mean1 = mean[1];
  const mean2 = mean[2];
  let failed = 0;
  for (let d = 0; d < draws; d++) {
    sampler.reset();
    sampler.fill(blockStarts, fullBlocks + 1);
    // Packed lower triangle (0,0) (1,0) (1,1) (2,0) (2,1) (2,2), then X'y.
    let s00 = 0;
    let s10 = 0;
    let s11 = 0;
    let s20 = 0;
    let s21 = 0;
    let s22 = 0;
    let r0 = 0;
    let r1 = 0;
    let r2 = 0;
    for (let c = 0; c <= fullBlocks; c++) {
      const o = (c < fullBlocks ? 0 : lastBase) + blockStarts[c] * 9;
      s00 += table[o];
      s10 += table[o + 1];
      s11 += table[o + 2];
      s20 += table[o + 3];
      s21 += table[o + 4];
      s22 += table[o + 5];
      r0 += table[o + 6];
      r1 += table[o + 7];
      r2 += table[o + 8];
    }
    const base = d * 3;
    // Cholesky L L' of the normal matrix. choleskyInPlace stops at the first pivot that fails its
    // test; here a failed pivot turns what follows into NaN or garbage, and the draw fails all the same.
    const d0 = s00;
    const l00 = Math.sqrt(d0);
    const l10 = s10 / l00;
    const l20 = s20 / l00;
    const d1 = s11 - l10 * l10;
    const l11 = Math.sqrt(d1);
    const l21 = (s21 - l20 * l10) / l11;
    const d2 = s22 - l20 * l20 - l21 * l21;
    if (!(d0 > 1e-10 * s00 && d0 > 0 && d1 > 1e-10 * s11 && d1 > 0 && d2 > 1e-10 * s22 && d2 > 0)) {
      failed++;
      out[base] = out[base + 1] = out[base + 2] = Number.NaN;
      continue;
    }
    const l22 = Math.sqrt(d2);
    // Forward (L z = r) and back (L' x = z) substitution.
    const z0 = r0 / l00;
    const z1 = (r1 - l10 * z0) / l11;
    const z2 = (r2 - l20 * z0 - l21 * z1) / l22;
    const x2 = z2 / l22;
    const x1 = (z1 - l21 * x2) / l11;
    const x0 = (z0 - l10 * x1 - l20 * x2) / l00;
    // Undo the scaling and the centring.
    const c0 = x0 / scale0;
    const c1 = x1 / scale1;
    const c2 = x2 / scale2;
    out[base] = c0;
    out[base + 1] = c1;
    out[base + 2] = c2;
    if (constantColumn >= 0) {
      let interceptShift = 0;
      if (constantColumn !== 0) interceptShift += mean0 * c0;
      if (constantColumn !== 1) interceptShift += mean1 * c1;
      if (constantColumn !== 2) interceptShift += mean2 * c2;
      out[base + constantColumn] -= interceptShift / constantValue;
    }
  }
  return failed;
}

/**
 * Percentile interval of each coefficient over the draws (NaN draws left out), quantiles by
 * linear interpolation between order statistics (R's quantile type 7).
 * Throws RangeError when level is not in (0, 1).
 * Example: with draws 1..99 of one coefficient and level 0.9, the interval is [5.9, 94.1].
 * Reference: B. Efron and R. J. Tibshirani (1993), An Introduction to the Bootstrap, ch. 13;
 * R. J. Hyndman and Y. Fan (1996), Am. Statistician 50(4), 361-365 (type 7).
 */
export function bootstrapPercentileIntervals(
  result: OlsBootstrapResult,
  level = 0.95,
): readonly { readonly name: string; readonly lower: number; readonly upper: number; readonly validDraws: number }[] {
  if (!(level > 0 && level < 1)) throw new RangeError(`level must be in (0, 1), got ${level}`);
  const k = result.columns;
  const rows = [];
  const values = new Float64Array(result.draws);
  for (let j = 0; j < k; j++) {
    let count = 0;
    for (let d = 0; d < result.draws; d++) {
      const v = result.coefficients[d * k + j];
      if (!Number.isNaN(v)) values[count++] = v;
    }
    const sorted = values.subarray(0, count).slice().sort();
    rows.push(
      Object.freeze({
        name: result.names[j],
        lower: quantileType7(sorted, (1 - level) / 2),
        upper: quantileType7(sorted, (1 + level) / 2),
        validDraws: count,
      }),
    );
  }
  return Object.freeze(rows);
}

function quantileType7(sorted: Float64Array, probability: number): number {
  const count = sorted.length;
  if (count === 0) return Number.NaN;
  const h = (count - 1) * probability;
  const lo = Math.floor(h);
  const hi = Math.min(count - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

// ---------------------------------------------------------------------------------------------
// Panels
// ---------------------------------------------------------------------------------------------

/** How a panel is resampled. */
export type PanelBootstrapScheme =
  /**
   * Blocks of consecutive PERIODS (e.g. years) drawn once per draw and used for EVERY group (the
   * same years for all economies): keeps the cross-sectional dependence within a year. Periods are
   * the sorted distinct period values; gaps in the calendar are not seen. Each chosen period
   * contributes all rows that have it, so unbalanced panels give resamples of varying size.
   */
  | "common-periods"
  /**
   * Blocks drawn independently WITHIN each group (economy) from its own rows in period order;
   * every group keeps its number of rows. Treats groups as independent. A group shorter than the
   * block length is resampled with blocks of its own length.
   */
  | "within-group";

export interface PanelLayout {
  /** Group label per row (e.g. economy code). */
  readonly groups: ArrayLike<string | number>;
  /** Period per row (e.g. year), numeric. */
  readonly periods: ArrayLike<number>;
}

export interface PanelBootstrapOptions extends BlockBootstrapOptions {
  readonly scheme: PanelBootstrapScheme;
}

/** A prepared panel resampler: call `draw` as often as needed; it allocates nothing. */
export interface PanelBlockBootstrap {
  readonly scheme: PanelBootstrapScheme;
  /** Block length in periods (common-periods) or the fixed length for every group (within-group), or null when each group uses its own default. */
  readonly blockLength: number | null;
  /** Capacity `out` must have. */
  readonly maxRows: number;
  /**
   * Writes the resampled row indices (rows of the original panel) into `out`; returns how many.
   * Allocates nothing after the first call with a given generator.
   */
  draw(rng: Rng, out: Int32Array): number;
}

/**
 * Prepare a block bootstrap of a panel (rows = observations with a group and a period); see
 * `PanelBootstrapScheme` for the two schemes. Default block length: round(P^(1/3)) with P the
 * number of distinct periods (common-periods), or round(T_g^(1/3)) per group (within-group).
 * Throws RangeError for mismatched lengths, missing labels, non-finite periods or a bad block length.
 * Reference: Künsch (1989); for "common-periods", the moving-blocks bootstrap of panel
 * regressions that resamples blocks of time periods for all units at once, S. Gonçalves (2011),
 * "The moving blocks bootstrap for panel linear regression models with individual fixed effects",
 * Econometric Theory 27(5), 1048-1082 (citation from memory).
 */
export function createPanelBlockBootstrap(layout: PanelLayout, options: PanelBootstrapOptions): PanelBlockBootstrap {
  const n = layout.groups.length;
  if (layout.periods.length !== n) throw new RangeError(`panel has ${n} group labels but ${layout.periods.length} periods`);
  if (n === 0) throw new RangeError("panel has no rows");
  for (let i = 0; i < n; i++) {
    const g = layout.groups[i];
    if (g === undefined || g === null || (typeof g === "number" && Number.isNaN(g))) throw new RangeError(`group label of row ${i} is missing`);
    if (!Number.isFinite(layout.periods[i])) throw new RangeError(`period of row ${i} is not finite: ${layout.periods[i]}`);
  }
  const circular = options.circular ?? false;
  if (options.scheme === "common-periods") {
    const distinct = [...new Set(Array.from(layout.periods))].sort((a, b) => a - b);
    const position = new Map(distinct.map((p, i) => [p, i]));
    const p = distinct.length;
    const blockLength = resolveBlockLength(p, options.blockLength);
    // rows per period, CSR layout, rows in their original order
    const counts = new Int32Array(p + 1);
    for (let i = 0; i < n; i++) counts[(position.get(layout.periods[i]) as number) + 1]++;
    for (let q = 0; q < p; q++) counts[q + 1] += counts[q];
    const rowsByPeriod = new Int32Array(n);
    const fill = counts.slice(0, p);
    for (let i = 0; i < n; i++) rowsByPeriod[fill[position.get(layout.periods[i]) as number]++] = i;
    let maxRowsPerPeriod = 0;
    for (let q = 0; q < p; q++) maxRowsPerPeriod = Math.max(maxRowsPerPeriod, counts[q + 1] - counts[q]);
    const periodDraw = new Int32Array(p);
    const periodBlockStarts = new Int32Array(Math.ceil(p / blockLength));
    const periodStarts = circular ? p : p - blockLength + 1;
    let sampler: BlockStartSampler | null = null;
    let samplerRng: Rng | null = null;
    return Object.freeze({
      scheme: "common-periods" as const,
      blockLength,
      maxRows: p * maxRowsPerPeriod,
      draw(rng: Rng, out: Int32Array): number {
        if (out.length < p * maxRowsPerPeriod) throw new RangeError(`output holds ${out.length} rows but up to ${p * maxRowsPerPeriod} may be needed`);
        if (samplerRng !== rng || sampler === null) {
          sampler = new BlockStartSampler(rng, periodStarts);
          samplerRng = rng;
        }
        fillBlockIndices(p, blockLength, circular, sampler, periodDraw, 0, periodBlockStarts);
        let count = 0;
        for (let q = 0; q < p; q++) {
          const period = periodDraw[q];
          for (let r = counts[period]; r < counts[period + 1]; r++) out[count++] = rowsByPeriod[r];
        }
        return count;
      },
    });
  }
  if (options.scheme === "within-group") {
    const byGroup = new Map<string | number, number[]>();
    for (let i = 0; i < n; i++) {
      const g = layout.groups[i];
      let rows = byGroup.get(g);
      if (!rows) byGroup.set(g, (rows = []));
      rows.push(i);
    }
    const groups = [...byGroup.values()].map((rows) => Int32Array.from(rows.sort((a, b) => layout.periods[a] - layout.periods[b])));
    const lengths = groups.map((rows) => resolveBlockLength(rows.length, options.blockLength === undefined ? undefined : Math.min(options.blockLength, rows.length)));
    const scratch = new Int32Array(Math.max(...groups.map((rows) => rows.length)));
    const blockStarts = new Int32Array(scratch.length); // at least ceil(rows / block length) for every group
    let samplers: BlockStartSampler[] = [];
    let samplerRng: Rng | null = null;
    return Object.freeze({
      scheme: "within-group" as const,
      blockLength: options.blockLength ?? null,
      maxRows: n,
      draw(rng: Rng, out: Int32Array): number {
        if (out.length < n) throw new RangeError(`output holds ${out.length} rows but ${n} are needed`);
        if (samplerRng !== rng) {
          // One sampler per group, made once per generator (not per draw).
          samplers = groups.map((rows, g) => new BlockStartSampler(rng, circular ? rows.length : rows.length - lengths[g] + 1));
          samplerRng = rng;
        }
        let count = 0;
        for (let g = 0; g < groups.length; g++) {
          const rows = groups[g];
          fillBlockIndices(rows.length, lengths[g], circular, samplers[g], scratch, 0, blockStarts);
          for (let t = 0; t < rows.length; t++) out[count++] = rows[scratch[t]];
        }
        return count;
      },
    });
  }
  throw new RangeError(`unknown panel bootstrap scheme "${String((options as { scheme: unknown }).scheme)}"`);
}
