// Per-economy results of estimateKpf on SIMULATED panels (kpf-simulate.ts; fictional economies),
// plus a small Monte Carlo check of recovery (the 500-replication coverage run is bench/monte-carlo.ts).
import { describe, expect, it } from "vitest";
import { economySeed, estimateKpf, kpfInputKey } from "./kpf-estimate";
import type { KpfEconomySeries } from "./kpf-sample";
import { simulateKpfPanel } from "./kpf-simulate";
import { REFERENCE_PANEL_SPEC, REFERENCE_SPEC, TEAM_DEFAULT_SPEC, deriveKpfSpec, kpfSpec } from "./kpf-spec";
import { fitKpf } from "./kpf-fit";
import { createRng } from "./random";

const sim = simulateKpfPanel({ economies: 6, years: 45, gamma: 1, theta: -1, sigmaU: 0.1 }, createRng(17));
const short: KpfEconomySeries = {
  economy: "XZZ",
  years: [2015, 2016, 2017, 2018, 2019],
  researchers: [10, 11, 12, 13, 14],
  tfp: [1, 1.01, 1.02, 1.03, 1.04],
  population: [100, 100, 100, 100, 100],
};

describe("estimateKpf, economy scope", () => {
  const spec = deriveKpfSpec(REFERENCE_SPEC, { bootstrap: { draws: 199 } });
  const results = estimateKpf([short, ...sim.panel], spec);

  it("returns one frozen row per economy, sorted, with the headline fields and details", () => {
    expect(results.map((r) => r.economy)).toEqual(["XAA", "XAB", "XAC", "XAD", "XAE", "XAF", "XZZ"]);
    const r = results[0];
    expect(Object.isFrozen(r)).toBe(true);
    expect(Object.keys(r)).toEqual([
      "economy", "nobs", "gamma", "theta", "logB", "seGamma", "seTheta", "n", "gStar", "gStarLo", "gStarHi", "pThetaGe1", "regime", "warnings", "details",
    ]);
    expect(r.nobs).toBe(44);
    expect(r.details.sampleYears).toHaveLength(44);
    expect(r.details.role).toBe("diagnostic");
    expect(r.details.bootstrap).toMatchObject({ draws: 199, scheme: "moving-blocks", blockLength: 4, seed: economySeed(spec.bootstrap.seed, "XAA") });
    expect(r.details.covariance).toMatch(/^Newey-West HAC, Bartlett kernel, lag 3, no prewhitening, adjust T\/\(T-k\)/);
    expect(r.warnings[r.warnings.length - 1]).toMatch(/^Single-economy fit, a diagnostic:/);
    expect(r.gStarLo).toBeLessThanOrEqual(r.gStarHi);
  });

  it("gives an economy with too few observations a row without estimate and the reason", () => {
    const r = results[results.length - 1];
    expect(r).toMatchObject({ economy: "XZZ", nobs: 4, regime: "no-estimate", gStar: null });
    expect(r.theta).toBeNaN();
    expect(r.warnings[0]).toBe("XZZ: 4 usable observations, fewer than the minimum of 8: no estimate (0 non-positive growth, 0 missing inputs).");
  });

  it("bootstraps levels-nls by refitting the nonlinear model per draw", () => {
    const r = estimateKpf([sim.panel[0]], kpfSpec({ form: "levels-nls", bootstrap: { draws: 49 } }))[0];
    expect(r.details.estimator).toBe("NLS (Levenberg-Marquardt)");
    expect(r.details.bootstrap!.scheme).toBe("moving-blocks+nls-refit");
    expect(r.details.bootstrap!.validDraws).toBeGreaterThanOrEqual(45);
    expect(r.details.intervals.theta.lower).toBeLessThan(r.theta);
    expect(r.details.intervals.theta.upper).toBeGreaterThan(r.theta);
  });

  it("makes an economy's result independent of the other economies in the file (refit only what changed)", () => {
    const alone = estimateKpf([sim.panel[2]], spec)[0];
    expect(alone).toEqual(results[2]);
    expect(kpfInputKey(sim.panel[2], spec)).toBe(kpfInputKey({ ...sim.panel[2] }, spec));
    const revised = { ...sim.panel[2], tfp: sim.panel[2].tfp.map((v, i) => (i === 10 ? (v as number) * 1.001 : v)) };
    expect(kpfInputKey(revised, spec)).not.toBe(kpfInputKey(sim.panel[2], spec));
  });

  it("is reproducible and respects the seed", () => {
    const again = estimateKpf(sim.panel.slice(0, 2), spec);
    expect(again[0]).toEqual(results[0]);
    const otherSeed = estimateKpf(sim.panel.slice(0, 1), spec, { seed: 7 })[0];
    expect(otherSeed.gamma).toBe(results[0].gamma);
    expect(otherSeed.gStarLo).not.toBe(results[0].gStarLo);
    expect(economySeed(1, "XAA")).toBe(economySeed(1, "XAA"));
    expect(economySeed(1, "XAA")).not.toBe(economySeed(1, "XAB"));
  });
});

describe("estimateKpf, panel scope", () => {
  it("pools, keeps each economy's own n, ln B and g*, and reports left-out economies", () => {
    const spec = deriveKpfSpec(REFERENCE_PANEL_SPEC, { bootstrap: { draws: 199 } });
    const results = estimateKpf([short, ...sim.panel], spec);
    const estimated = results.filter((r) => r.regime !== "no-estimate");
    expect(estimated).toHaveLength(6);
    const theta = estimated[0].theta;
    for (const r of estimated) {
      expect(r.theta).toBe(theta); // common theta
      expect(r.gamma).toBe(1); // restricted
      expect(r.gStar!).toBeCloseTo(r.n! / (1 - theta), 14); // g* = n/(1 - theta), each economy its own n
      expect(r.details.pooledObservations).toBe(6 * 44);
      expect(r.details.role).toBe("pooled");
      expect(r.warnings.some((w) => w.startsWith("XZZ"))).toBe(false); // other economies' notes stay with them
    }
    expect(new Set(estimated.map((r) => r.logB)).size).toBe(6);
    expect(results.find((r) => r.economy === "XZZ")!.warnings[0]).toMatch(/left out of the pooled fit/);
    expect(estimated[0].warnings).toContain("only 6 clusters: cluster-robust standard errors are unreliable with fewer than about 10 clusters.");
  });

  it("falls back to HAC, in words, when only one economy is left to cluster on", () => {
    const results = estimateKpf([short, sim.panel[0]], deriveKpfSpec(REFERENCE_PANEL_SPEC, { bootstrap: { draws: 49 } }));
    const r = results.find((x) => x.economy === "XAA")!;
    expect(r.regime).not.toBe("no-estimate");
    expect(r.details.covariance).toMatch(/^Newey-West HAC/);
    expect(r.warnings).toContain("Only one economy (XAA) has enough observations for the pooled fit: standard errors are Newey-West HAC instead of clustered by economy.");
  });

  it("supports the three panel bootstrap schemes", () => {
    for (const panelScheme of ["economies", "within-economy", "common-years"] as const) {
      const spec = kpfSpec({ scope: "panel", covariance: { kind: "cluster" }, restrictions: { gamma: 1 }, bootstrap: { draws: 99, panelScheme } });
      const r = estimateKpf(sim.panel, spec)[0];
      expect(r.details.bootstrap!.scheme).toBe(panelScheme);
      expect(r.details.bootstrap!.validDraws).toBe(99);
      expect(r.details.intervals.theta.lower).toBeLessThan(r.theta);
      expect(r.details.intervals.theta.upper).toBeGreaterThan(r.theta);
    }
  });

  it("runs the team default end to end", () => {
    const results = estimateKpf(sim.panel, deriveKpfSpec(TEAM_DEFAULT_SPEC, { bootstrap: { draws: 99 } }));
    expect(results.every((r) => r.regime === "converging")).toBe(true);
    expect(results[0].details.specDescription).toContain("HP-trend growth (lambda 100)");
  });
});

describe("Monte Carlo, small: recovery on simulated panels", () => {
  it("the restricted panel recovers theta = -1 on average over 20 replications (mean error within 0.02)", () => {
    // 20 simulated panels of 10 economies x 45 years, gamma = 1 (restricted as in the spec), theta = -1.
    const spec = kpfSpec({ scope: "panel", covariance: { kind: "cluster" }, restrictions: { gamma: 1 }, bootstrap: { draws: 0 } });
    const errors: number[] = [];
    for (let r = 0; r < 20; r++) {
      const panel = simulateKpfPanel({ economies: 10, years: 45, gamma: 1, theta: -1 }, createRng(500 + r));
      errors.push(fitKpf(panel.panel, spec).parameters.theta + 1);
    }
    const mean = errors.reduce((s, x) => s + x, 0) / errors.length;
    expect(Math.abs(mean)).toBeLessThan(0.02); // simulation truth theta = -1, tol 0.02 (about 4 x the Monte Carlo error of the mean)
    expect(Math.max(...errors.map(Math.abs))).toBeLessThan(0.15); // no replication far off, tol 0.15
  });
});
