/**
 * Seeded random numbers for bootstraps and simulations: every random draw in lib/estimation comes
 * from an `Rng` passed in by the caller, so results are reproducible from the seed.
 *
 * Generator: xoroshiro128+ (D. Blackman and S. Vigna (2018), "Scrambled linear pseudorandom number
 * generators", ACM TOMS 47(4), 2021) from the installed `pure-rand` package (v8), used through its
 * fast mutable API (`next()` advances the generator in place; no object per draw). Period 2^128 - 1;
 * `jump()` moves 2^64 steps ahead, giving non-overlapping streams for parallel work. Its lowest
 * bits are weak, which does not matter here: integers come from pure-rand's `uniformInt`
 * (rejection sampling, unbiased) and floats from `uniformFloat64` (53 random bits).
 */
import { uniformFloat64 } from "pure-rand/distribution/uniformFloat64";
import { uniformInt } from "pure-rand/distribution/uniformInt";
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import type { JumpableRandomGenerator } from "pure-rand/types/JumpableRandomGenerator";
import { normalQuantile } from "./distributions";

/** A seeded random number generator. Methods advance its state. */
export interface Rng {
  /** The seed it was created from (after `jumped()` the seed of the parent). */
  readonly seed: number;
  /** Uniform integer in [0, n), n a positive integer <= 2^32 (unbiased). */
  nextInt(n: number): number;
  /** Uniform double in [0, 1), a multiple of 2^-53. */
  nextFloat64(): number;
  /** Standard normal draw (inverse-CDF method with AS 241 on a uniform in (0, 1)). */
  nextNormal(): number;
  /** An independent copy in the same state (both then produce the same sequence). */
  clone(): Rng;
  /** A new generator 2^64 steps ahead of this one (this one is not advanced): a separate stream. */
  jumped(): Rng;
}

class XoroshiroRng implements Rng {
  constructor(
    readonly seed: number,
    private readonly generator: JumpableRandomGenerator,
  ) {}

  nextInt(n: number): number {
    if (!(Number.isInteger(n) && n >= 1 && n <= 0x100000000)) {
      throw new RangeError(`nextInt needs an integer n in [1, 2^32], got ${n}`);
    }
    return uniformInt(this.generator, 0, n - 1);
  }

  nextFloat64(): number {
    return uniformFloat64(this.generator);
  }

  nextNormal(): number {
    // u in (0, 1): shift the 2^-53 grid by half a step so that 0 is never passed to the quantile.
    return normalQuantile(uniformFloat64(this.generator) + 2 ** -54);
  }

  clone(): Rng {
    return new XoroshiroRng(this.seed, this.generator.clone());
  }

  jumped(): Rng {
    const g = this.generator.clone();
    g.jump();
    return new XoroshiroRng(this.seed, g);
  }
}

/**
 * Create a seeded generator (xoroshiro128+ via pure-rand). The seed is any safe integer; pure-rand
 * seeds from 32 bits, so the high bits are folded in (seed mod 2^32, XOR the high part times the
 * golden-ratio constant 0x9E3779B1).
 * Throws RangeError when the seed is not a safe integer.
 * Example: `createRng(42).nextInt(6)` gives the same value on every run and machine.
 * Reference: Blackman & Vigna (2018/2021); pure-rand v8 `xoroshiro128plus`.
 */
export function createRng(seed: number): Rng {
  if (!Number.isSafeInteger(seed)) throw new RangeError(`seed must be a safe integer, got ${seed}`);
  const low = Number(BigInt.asUintN(32, BigInt(seed)));
  const high = Math.floor(seed / 0x100000000) | 0;
  const folded = (low ^ Math.imul(high, 0x9e3779b1)) | 0;
  return new XoroshiroRng(seed, xoroshiro128plus(folded));
}
