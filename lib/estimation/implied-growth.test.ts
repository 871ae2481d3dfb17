// Long-run implications through impliedGrowth: the analytic results of DOMAIN.md section 2 (already
// checked in dynamics.test.ts) reached through a fit, the delta method by hand, the bootstrap
// percentiles against a sort-based type-7 quantile, and the flags in words. Fits are on SIMULATED
// economies (kpf-simulate.ts; fictional, not data).
import { describe, expect, it } from "vitest";
import { bootstrapKpf } from "./kpf-bootstrap";
import { kpfCovariance } from "./kpf-covariance";
import { fitKpf } from "./kpf-fit";
import { simulateKpfPanel } from "./kpf-simulate";
import { REFERENCE_SPEC, kpfSpec } from "./kpf-spec";
import { impliedGrowth } from "./implied-growth";
import { createRng } from "./random";
import { growthScenario, scenarioForEconomy } from "./scenarios";

const sim = simulateKpfPanel({ economies: 4, years: 45, gamma: 0.5, theta: 0.5, sigmaU: 0.05 }, createRng(3));

/** A fit whose gamma and theta are fixed: the implications then follow from the formulas alone. */
function fixedFit(gamma: number, theta: number) {
  const fit = fitKpf(sim.panel[0], kpfSpec({ restrictions: { gamma, theta }, bootstrap: { draws: 0 } }));
  return { fit, cov: kpfCovariance(fit) };
}

/** R's quantile type 7 on a copy, sorted (Hyndman & Fan 1996), infinities allowed. */
function type7(values: number[], p: number): number {
  const s = [...values].sort((a, b) => a - b);
  const h = (s.length - 1) * p;
  const lo = Math.floor(h);
  const f = h - lo;
  if (f === 0 || s[lo] === s[lo + 1]) return s[lo];
  if (s[lo + 1] === Infinity) return Infinity;
  return s[lo] + f * (s[lo + 1] - s[lo]);
}

describe("the DOMAIN.md section 2 example through a fit", () => {
  it("gamma = 0.5, theta = 0.5, n = 0.01, g0 = 0.03: g* = 0.01, g(100) = 0.0167885, half-life 138.6 years", () => {
    const { fit, cov } = fixedFit(0.5, 0.5);
    const result = impliedGrowth(fit, cov, { n: 0.01, g0: 0.03, horizon: 100 });
    const e = result.economies[0];
    expect(e.gStar).toBeCloseTo(0.01, 15); // [computed] DOMAIN.md section 2: g* = 0.01, tol 1e-15
    expect(e.regime).toBe("converging");
    expect(e.pThetaGe1).toBe(0); // theta fixed below 1
    expect(Math.abs(e.path!.closedForm[100]! - 0.0167885)).toBeLessThan(5e-8); // [computed] DOMAIN.md section 2: g(100) = 0.0167885 (7 digits)
    expect(e.path!.maxDifference).toBeLessThan(1e-9); // closed form vs Dormand-Prince, issue 3: 1e-9
    expect(e.halfLife.years!).toBeCloseTo(Math.LN2 / 0.005, 12); // [computed] ln 2/(gamma n) = 138.63 years
    expect(e.discreteSteadyState!).toBeCloseTo(Math.expm1(0.01), 15); // (1 + n)^kappa - 1 with kappa = 1 and 1 + n = e^0.01, by hand
    expect(e.blowUpTime).toBeNull();
    expect(e.path!.level[0]).toBe(sim.panel[0].tfp[sim.panel[0].tfp.length - 1]); // projection starts at the last observed TFP
  });

  it("theta = 1.2, g0 = 0.02: explosive, blow-up at 162.2 years (n = 0.01) and 250 (n = 0)", () => {
    const { fit, cov } = fixedFit(0.5, 1.2);
    const withGrowth = impliedGrowth(fit, cov, { n: 0.01, g0: 0.02 }).economies[0];
    expect(withGrowth.regime).toBe("explosive");
    expect(withGrowth.gStar).toBeNull();
    expect(withGrowth.pThetaGe1).toBe(1);
    expect(Math.abs(withGrowth.blowUpTime! - 162.2)).toBeLessThan(0.05); // [computed] DOMAIN.md section 2: t* = 162.2
    expect(withGrowth.warnings).toContain("XAA: no steady-state growth rate: theta = 1.2 is in the explosive regime (growth accelerates without bound).");
    const flat = impliedGrowth(fit, cov, { n: 0, g0: 0.02 }).economies[0];
    expect(flat.blowUpTime!).toBeCloseTo(250, 9); // [computed] DOMAIN.md section 2: t* = 1/((theta - 1) g0) = 250
  });

  it("Bloom, Jones, Van Reenen & Webb (2020): gamma = 1, beta = 1 - theta = 3.1, n = 4.3% give g* = 1.39%", () => {
    // [memory] researcher growth 4.3% a year and beta about 3.1 (DOMAIN.md section 7, from memory)
    const { fit, cov } = fixedFit(1, 1 - 3.1);
    const e = impliedGrowth(fit, cov, { n: 0.043 }).economies[0];
    expect(Math.abs(e.gStar! - 0.043 / 3.1)).toBeLessThan(1e-15); // [computed] DOMAIN.md section 7: 0.043/3.1, tol 1e-15
    expect(Math.abs(e.gStar! - 0.014)).toBeLessThan(0.0005); // [read] CBO Long-Term Budget Outlook 2020: US TFP 1.4%/yr since 1950, tol 0.05 pp
    expect(e.halfLife.years!).toBeCloseTo(Math.LN2 / 0.043, 12); // ln 2/(gamma n), by hand
  });
});

describe("delta method", () => {
  it("uses the gradient (n/(1-theta), gamma n/(1-theta)^2) and gamma/(1-theta) for n (by hand, rel 1e-12)", () => {
    const fit = fitKpf(sim.panel[1], REFERENCE_SPEC);
    const cov = kpfCovariance(fit);
    const { gamma, theta } = fit.parameters;
    const n = 0.02;
    const nSe = 0.004;
    const e = impliedGrowth(fit, cov, { n, nStandardError: nSe, draws: 0 }).economies[0];
    const p = cov.matrix.rows;
    const V = (a: number, b: number) => cov.matrix.data[a + b * p];
    const dGamma = n / (1 - theta);
    const dTheta = (gamma * n) / (1 - theta) ** 2;
    const dN = gamma / (1 - theta);
    const variance = dGamma ** 2 * V(0, 0) + dTheta ** 2 * V(1, 1) + 2 * dGamma * dTheta * V(0, 1) + dN ** 2 * nSe ** 2;
    expect(Math.abs(e.gStarStandardError / Math.sqrt(variance) - 1)).toBeLessThan(1e-12); // DOMAIN.md section 4 gradient, by hand
    const z = 1.6448536269514722; // normal 95% quantile for a 90% interval (R qnorm(0.95))
    expect(e.gStarDelta.lower).toBeCloseTo(e.gStar! - z * e.gStarStandardError, 14);
    expect(e.gStarInterval.method).toBe("delta"); // no draws: the delta interval is shown
  });
});

describe("bootstrap", () => {
  const fit = fitKpf(sim.panel[2], REFERENCE_SPEC);
  const cov = kpfCovariance(fit);
  const boot = bootstrapKpf(fit, { draws: 499, rng: createRng(99) });

  it("gives percentile intervals equal to type-7 quantiles of the draws, infinite when theta_d >= 1", () => {
    const n = 0.02;
    const e = impliedGrowth(fit, cov, { n, bootstrap: boot }).economies[0];
    const thetas: number[] = [];
    const gstars: number[] = [];
    for (let d = 0; d < boot.draws; d++) {
      const t = boot.structural[4 * d + 1];
      thetas.push(t);
      gstars.push(t >= 1 ? Infinity : boot.structural[4 * d + 3] * n);
    }
    // 90% interval: probabilities (1 -/+ 0.9)/2 as computed in floating point (0.04999999999999999
    // and 0.95), as R's boot.ci forms them (from memory); exact equality needs the same doubles.
    const [pLo, pHi] = [(1 - 0.9) / 2, (1 + 0.9) / 2];
    expect(e.gStarBootstrap!.lower).toBe(type7(gstars, pLo)); // R quantile(type = 7), exact
    expect(e.gStarBootstrap!.upper).toBe(type7(gstars, pHi));
    expect(e.regimeParameterInterval.lower).toBe(type7(thetas, pLo));
    expect(e.regimeParameterInterval.upper).toBe(type7(thetas, pHi));
    expect(e.pThetaGe1).toBe(thetas.filter((t) => t >= 1).length / boot.draws);
    expect(e.gStarInterval).toBe(e.gStarBootstrap);
    expect(e.bootstrapDraws.valid).toBe(499);
  });

  it("is reproducible from the seed and draws n with its sampling error", () => {
    const a = impliedGrowth(fit, cov, { rng: createRng(5), draws: 199 }).economies[0];
    const b = impliedGrowth(fit, cov, { rng: createRng(5), draws: 199 }).economies[0];
    expect(a.gStarInterval).toEqual(b.gStarInterval);
    expect(a.n.standardError).toBeGreaterThan(0);
    expect(a.n.degreesOfFreedom).toBe(9); // 10 annual changes in the 10-year window
    expect(() => impliedGrowth(fit, cov, { draws: 10 })).toThrow("impliedGrowth: bootstrap draws need a seeded rng (options.rng)");
  });

  it("flags intervals that span regimes or include negative growth, in words", () => {
    // Very noisy short series (simulated, seed 7): the single-economy fit cannot tell the regime.
    const noisy = simulateKpfPanel({ economies: 1, years: 20, gamma: 0.5, theta: 0.5, sigmaU: 0.8 }, createRng(7));
    const f = fitKpf(noisy.panel[0], REFERENCE_SPEC);
    const e = impliedGrowth(f, kpfCovariance(f), { rng: createRng(1), draws: 299 }).economies[0];
    expect(e.spansRegimes).toBe(true);
    expect(e.warnings.some((w) => w.startsWith("XAA: the 90% interval of theta spans regimes."))).toBe(true);
    expect(e.warnings.some((w) => / bootstrap draws have theta >= 1 \(no steady state\), so the upper end of the g\* interval is unbounded\.$/.test(w))).toBe(true);
    expect(e.warnings.some((w) => /^XAA: the 90% interval of g\* \(-[\d.]+% to \+infinity\) includes negative values/.test(w))).toBe(true);
    expect(e.gStarInterval.upper).toBe(Infinity);
  });

  it("warns when research labour shrinks", () => {
    const { fit: fixed, cov: fixedCov } = fixedFit(1, -1);
    const e = impliedGrowth(fixed, fixedCov, { n: -0.01 }).economies[0];
    expect(e.gStar).toBeCloseTo(-0.005, 15);
    expect(e.warnings[0]).toBe("XAA: research labour shrinks (n = -1% a year): the formula gives a negative g*; in the model growth decays towards zero instead.");
  });
});

describe("scenarios", () => {
  it("reproduce the DOMAIN.md example and follow a research-labour path", () => {
    const constant = growthScenario({ gamma: 0.5, theta: 0.5, n: 0.01, g0: 0.03, years: 100 });
    expect(Math.abs(constant.growth[100]! - 0.0167885)).toBeLessThan(5e-8); // [computed] DOMAIN.md section 2
    expect(Math.abs(constant.growth[100]! - constant.closedForm![100]!)).toBeLessThan(1e-9); // integrator vs closed form
    expect(constant.longRun!.gStar).toBeCloseTo(0.01, 15);
    // n = 0.01 for 50 years then 0: after the switch growth follows g0' / (1 + b g0' t) (n = 0 solution, by hand)
    const path = growthScenario({ gamma: 0.5, theta: 0.5, n: [...new Array(50).fill(0.01), ...new Array(50).fill(0)], g0: 0.03, years: 100 });
    const g50 = path.growth[50]!;
    expect(Math.abs(path.growth[100]! - g50 / (1 + 0.5 * g50 * 50))).toBeLessThan(1e-10);
    expect(path.closedForm).toBeNull();
  });

  it("carry a fit's parameters and fan out over its bootstrap draws", () => {
    const fit = fitKpf(sim.panel, kpfSpec({ scope: "panel", covariance: { kind: "cluster" }, restrictions: { gamma: 0.5 } }));
    const cov = kpfCovariance(fit);
    const boot = bootstrapKpf(fit, { draws: 99, rng: createRng(4) });
    const implied = impliedGrowth(fit, cov, { bootstrap: boot, rng: createRng(4) });
    const s = scenarioForEconomy(fit, implied.economies[0], { n: 0.005, years: 30, label: "slower research growth" }, boot);
    expect(s.label).toBe("slower research growth");
    expect(s.levelFan!.bands).toHaveLength(5);
    const median = s.growthFan!.bands[2];
    const lower = s.growthFan!.bands[0];
    for (let t = 0; t <= 30; t++) expect(lower[t]!).toBeLessThanOrEqual(median[t]!);
  });
});
