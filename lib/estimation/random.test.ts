import { describe, expect, it } from "vitest";
import { createRng } from "./random";

describe("createRng (xoroshiro128+ via pure-rand)", () => {
  it("is reproducible from the seed and differs between seeds", () => {
    const draw = (seed: number) => {
      const rng = createRng(seed);
      return [rng.nextInt(1000), rng.nextInt(1000), rng.nextFloat64(), rng.nextNormal()];
    };
    expect(draw(42)).toEqual(draw(42));
    expect(draw(42)).not.toEqual(draw(43));
    expect(createRng(42).seed).toBe(42);
  });

  it("nextInt is in range and roughly uniform (chi-square, fixed seed)", () => {
    const rng = createRng(7);
    const counts = new Array<number>(6).fill(0);
    const n = 60000;
    for (let i = 0; i < n; i++) {
      const v = rng.nextInt(6);
      expect(v >= 0 && v < 6 && Number.isInteger(v)).toBe(true);
      counts[v]++;
    }
    const expected = n / 6;
    const chi2 = counts.reduce((s, c) => s + (c - expected) ** 2 / expected, 0);
    expect(chi2).toBeLessThan(20.5); // 5 df: P(chi2 > 20.5) < 0.001 (common practice)
  });

  it("nextFloat64 is in [0, 1) with mean near 1/2; nextNormal has mean near 0 and variance near 1", () => {
    const rng = createRng(11);
    let sum = 0;
    let sumNormal = 0;
    let sumSquares = 0;
    const n = 20000;
    for (let i = 0; i < n; i++) {
      const u = rng.nextFloat64();
      expect(u >= 0 && u < 1).toBe(true);
      sum += u;
      const z = rng.nextNormal();
      sumNormal += z;
      sumSquares += z * z;
    }
    expect(Math.abs(sum / n - 0.5)).toBeLessThan(0.01); // sd of the mean 0.002
    expect(Math.abs(sumNormal / n)).toBeLessThan(0.03); // sd of the mean 0.007
    expect(Math.abs(sumSquares / n - 1)).toBeLessThan(0.05);
  });

  it("clone replays the same stream; jumped gives a different stream without advancing the parent", () => {
    const a = createRng(5);
    a.nextInt(10);
    const b = a.clone();
    expect([a.nextInt(1e6), a.nextInt(1e6)]).toEqual([b.nextInt(1e6), b.nextInt(1e6)]);
    const parent = createRng(5);
    const reference = createRng(5);
    const child = parent.jumped();
    expect(parent.nextInt(1e9)).toBe(reference.nextInt(1e9));
    const c = createRng(5).jumped();
    expect(child.nextInt(1e9)).toBe(c.nextInt(1e9));
    expect(child.nextInt(1e9)).not.toBe(reference.nextInt(1e9));
  });

  it("accepts any safe integer seed and rejects others", () => {
    expect(() => createRng(2 ** 40 + 3).nextInt(5)).not.toThrow();
    expect(() => createRng(-17).nextInt(5)).not.toThrow();
    expect(createRng(2 ** 40 + 3).nextInt(1e9)).not.toBe(createRng(3).nextInt(1e9));
    expect(() => createRng(1.5)).toThrow(/safe integer/);
    expect(() => createRng(Number.NaN)).toThrow(RangeError);
    expect(() => createRng(1).nextInt(0)).toThrow(/nextInt/);
  });
});
