// Fits of every form on SIMULATED panels with known parameters (lib/estimation/kpf-simulate.ts and
// small generators below; fictional economies, not data), plus the mechanics of restrictions, fixed
// effects, exclusions and the structural covariance. Recovery tolerances are stated per check: a
// few standard errors of the estimator at this sample size, and an absolute bound.
import { describe, expect, it } from "vitest";
import { createMatrix } from "./linalg";
import { kpfCovariance } from "./kpf-covariance";
import { fitKpf, structuralFromCoefficients } from "./kpf-fit";
import type { KpfEconomySeries } from "./kpf-sample";
import { simulateKpfPanel } from "./kpf-simulate";
import { REFERENCE_SPEC, kpfSpec } from "./kpf-spec";
import { ols } from "./ols";
import { type Rng, createRng } from "./random";

const truth = { gamma: 0.6, theta: 0.3 };
const sim = simulateKpfPanel({ economies: 8, years: 60, ...truth, sigmaU: 0.02 }, createRng(11));

function expectWithin(actual: number, expected: number, tolerance: number, what: string): void {
  expect(Math.abs(actual - expected), `${what}: ${actual} vs ${expected} +/- ${tolerance}`).toBeLessThanOrEqual(tolerance);
}

describe("log-linear", () => {
  it("recovers gamma and theta from one simulated economy (within 3 HAC standard errors)", () => {
    const fit = fitKpf(sim.panel[0], REFERENCE_SPEC);
    const se = kpfCovariance(fit).standardErrors;
    expect(fit.role).toBe("diagnostic");
    expectWithin(fit.parameters.gamma, truth.gamma, 3 * se[0], "gamma"); // simulation truth, tol 3 se
    expectWithin(fit.parameters.theta, truth.theta, 3 * se[1], "theta"); // simulation truth, tol 3 se
    expectWithin(fit.parameters.logB[0], sim.truth[0].logB, 3 * se[4], "ln B"); // simulation truth, tol 3 se
    expect(fit.parameters.kappa).toBeCloseTo(fit.parameters.gamma / (1 - fit.parameters.theta), 14); // definition
  });

  it("recovers the common gamma and theta of a simulated panel with fixed effects (3 CR1 se, and 0.02)", () => {
    const fit = fitKpf(sim.panel, kpfSpec({ scope: "panel", covariance: { kind: "cluster" } }));
    const se = kpfCovariance(fit).standardErrors;
    expect(fit.role).toBe("pooled");
    expect(fit.economies).toEqual(sim.truth.map((t) => t.economy));
    expectWithin(fit.parameters.gamma, truth.gamma, Math.min(0.02, 3 * se[0]), "gamma"); // simulation truth
    expectWithin(fit.parameters.theta, truth.theta, Math.min(0.02, 3 * se[1]), "theta"); // simulation truth
    fit.economies.forEach((_, e) => expectWithin(fit.parameters.logB[e], sim.truth[e].logB, 0.3, `ln B of economy ${e}`)); // simulation truth, tol 0.3
  });

  it("moves a fixed gamma to the left side: the same as OLS of ln g - ln R on (1, ln A)", () => {
    const fit = fitKpf(sim.panel[1], kpfSpec({ restrictions: { gamma: 1 } }));
    const rows = fit.rows;
    const y = Float64Array.from(rows, (r) => Math.log(r.growth) - r.lnR);
    const x = createMatrix(rows.length, 2, Float64Array.from([...rows.map(() => 1), ...rows.map((r) => r.lnA)]));
    const direct = ols(x, y);
    expect(fit.regression!.names).toEqual(["(Intercept)", "lnA"]);
    expect(Math.abs(fit.parameters.theta - (1 + direct.coefficients[1]))).toBeLessThan(1e-12); // hand-built regression, tol 1e-12
    expect(fit.parameters.gamma).toBe(1);
    expect(kpfCovariance(fit).standardErrors[0]).toBe(0); // fixed: no uncertainty
  });

  it("fixes theta likewise", () => {
    const fit = fitKpf(sim.panel[1], kpfSpec({ restrictions: { theta: 0.3 } }));
    expect(fit.regression!.names).toEqual(["(Intercept)", "lnR"]);
    expect(fit.parameters.theta).toBe(0.3);
    expectWithin(fit.parameters.gamma, truth.gamma, 0.05, "gamma"); // simulation truth, tol 0.05
  });
});

describe("levels-nls", () => {
  it("starts from the log-linear fit and recovers gamma and theta (0.05; the levels equation approximates exp(g) - 1 by g)", () => {
    const fit = fitKpf(sim.panel[0], kpfSpec({ form: "levels-nls" }));
    expect(fit.regression!.kind).toBe("nls");
    expect((fit.regression as { converged: boolean }).converged).toBe(true);
    expectWithin(fit.parameters.gamma, truth.gamma, 0.05, "gamma"); // simulation truth, tol 0.05
    expectWithin(fit.parameters.theta, truth.theta, 0.05, "theta"); // simulation truth, tol 0.05
    const loglinear = fitKpf(sim.panel[0], REFERENCE_SPEC);
    expectWithin(fit.parameters.logB[0], loglinear.parameters.logB[0], 0.5, "ln B near the log-linear start"); // same model, tol 0.5
  });

  it("fits a panel with economy-specific B", () => {
    const fit = fitKpf(sim.panel, kpfSpec({ form: "levels-nls", scope: "panel", covariance: { kind: "cluster" } }));
    expectWithin(fit.parameters.gamma, truth.gamma, 0.03, "gamma"); // simulation truth, tol 0.03
    expectWithin(fit.parameters.theta, truth.theta, 0.03, "theta"); // simulation truth, tol 0.03
    const se = kpfCovariance(fit).standardErrors;
    expect(se[0]).toBeGreaterThan(0);
    expect(se[4]).toBeGreaterThan(0);
  });
});

/** Simulated cointegrated pair: ln A = c + kappa ln R + AR(1) error, ln R a random walk with drift (not data). */
function cointegrated(rng: Rng, kappa: number, years: number): KpfEconomySeries {
  const list: number[] = [];
  const researchers: number[] = [];
  const tfp: number[] = [];
  let lnR = 10;
  let u = 0;
  for (let t = 0; t < years; t++) {
    lnR += 0.03 + 0.03 * rng.nextNormal();
    u = 0.5 * u + 0.01 * rng.nextNormal();
    list.push(1960 + t);
    researchers.push(Math.exp(lnR));
    tfp.push(Math.exp(-3 + kappa * lnR + u));
  }
  return { economy: "XCA", years: list, researchers, tfp };
}

describe("cointegration", () => {
  const series = cointegrated(createRng(5), 0.4, 60);

  it("static OLS recovers kappa and leaves gamma and theta unidentified, saying so", () => {
    const fit = fitKpf(series, kpfSpec({ form: "cointegration" }));
    expect(fit.rows).toHaveLength(60);
    expectWithin(fit.parameters.kappa, 0.4, 0.03, "kappa"); // simulation truth, tol 0.03
    expect(fit.parameters.gamma).toBeNaN();
    expect(fit.warnings).toContain(
      "The cointegration form identifies kappa = gamma/(1 - theta) only: gamma and theta are not separately identified (fix one of them to recover the other).",
    );
  });

  it("dynamic OLS with gamma fixed gives theta = 1 - gamma/kappa with the delta-method se gamma/kappa^2 se(kappa)", () => {
    const fit = fitKpf(series, kpfSpec({ form: "cointegration", leadsLags: 2, restrictions: { gamma: 0.5 } }));
    expect(fit.regression!.names).toEqual(["(Intercept)", "lnR", "dlnR.lag2", "dlnR.lag1", "dlnR", "dlnR.lead1", "dlnR.lead2"]);
    expectWithin(fit.parameters.kappa, 0.4, 0.03, "kappa"); // simulation truth, tol 0.03
    const kappa = fit.parameters.kappa;
    expect(fit.parameters.theta).toBeCloseTo(1 - 0.5 / kappa, 14); // definition
    const se = kpfCovariance(fit).standardErrors;
    expect(se[1] / ((0.5 / kappa ** 2) * se[3])).toBeCloseTo(1, 12); // delta method, derived by hand
  });
});

describe("capital-augmented", () => {
  it("recovers beta and gives kappa = (beta + gamma)/(1 - theta - beta)", () => {
    // Simulated (not data): ln g = ln B + gamma ln R + beta ln K + (theta - 1) ln A + 0.02 e, ln K a random walk.
    const rng = createRng(21);
    const [gamma, beta, theta] = [0.5, 0.2, 0.1];
    const years: number[] = [];
    const researchers: number[] = [];
    const tfp: number[] = [];
    const capital: number[] = [];
    let lnR = 10;
    let lnK = 5;
    let lnA = 0;
    const logB = Math.log(0.02) - gamma * lnR - beta * lnK;
    for (let t = 0; t < 80; t++) {
      if (t > 0) {
        lnA += Math.exp(logB + gamma * lnR + beta * lnK + (theta - 1) * lnA + 0.02 * rng.nextNormal());
        lnR += 0.02 + 0.03 * rng.nextNormal();
        lnK += 0.03 + 0.03 * rng.nextNormal();
      }
      years.push(1940 + t);
      researchers.push(Math.exp(lnR));
      capital.push(Math.exp(lnK));
      tfp.push(Math.exp(lnA));
    }
    const fit = fitKpf({ economy: "XKA", years, researchers, tfp, capital }, kpfSpec({ form: "capital-augmented" }));
    expect(fit.regression!.names).toEqual(["(Intercept)", "lnR", "lnK", "lnA"]);
    const se = kpfCovariance(fit).standardErrors;
    expectWithin(fit.parameters.beta, beta, 3 * se[2], "beta"); // simulation truth, tol 3 se
    expectWithin(fit.parameters.gamma, gamma, 3 * se[0], "gamma"); // simulation truth, tol 3 se
    const p = fit.parameters;
    expect(p.kappa).toBeCloseTo((p.beta + p.gamma) / (1 - p.theta - p.beta), 14); // DOMAIN.md section 2 [computed]
  });
});

describe("the structural covariance", () => {
  it("carries the coefficient covariance to kappa as the delta method with a numerical gradient (rel 1e-6)", () => {
    const fit = fitKpf(sim.panel[2], REFERENCE_SPEC);
    const cov = kpfCovariance(fit);
    const b = Float64Array.from(fit.regression!.coefficients);
    const k = b.length;
    const out = new Float64Array(4);
    const gradient = new Float64Array(k);
    for (let j = 0; j < k; j++) {
      const h = 1e-6 * Math.max(1, Math.abs(b[j]));
      const up = Float64Array.from(b);
      up[j] += h;
      structuralFromCoefficients(fit.layout, up, 0, out);
      const kUp = out[3];
      up[j] -= 2 * h;
      structuralFromCoefficients(fit.layout, up, 0, out);
      gradient[j] = (kUp - out[3]) / (2 * h);
    }
    const V = cov.coefficients.matrix.data;
    let variance = 0;
    for (let a = 0; a < k; a++) for (let c = 0; c < k; c++) variance += gradient[a] * V[a + c * k] * gradient[c];
    expect(Math.abs(cov.standardErrors[3] / Math.sqrt(variance) - 1)).toBeLessThan(1e-6); // central differences, tol 1e-6
  });
});

describe("covariance choices that ignore overlapping smoothing", () => {
  it("are flagged in words", () => {
    const fit = fitKpf(sim.panel[0], kpfSpec({ smoothing: { kind: "average", years: 5, overlapping: true } }));
    expect(kpfCovariance(fit, { kind: "HC", type: "HC1" }).warnings).toContain(
      "Smoothed growth (5-year moving averages) shares years between observations, so their errors are serially correlated: HC1 standard errors ignore this and are too small; use HAC or clustering by economy.",
    );
    expect(kpfCovariance(fit).warnings).toEqual([]); // HAC with lag raised to at least k - 1
    expect(kpfCovariance(fit).coefficients.lags).toBe(4);
  });
});

describe("too few observations and misuse", () => {
  const short: KpfEconomySeries = {
    economy: "XSH",
    years: [2000, 2001, 2002, 2003, 2004, 2005],
    researchers: [10, 11, 12, 13, 14, 15],
    tfp: [1, 1.01, 1.02, 1.03, 1.02, 1.04],
  };

  it("returns an unestimated fit with the reason when a single economy has fewer than the minimum", () => {
    const fit = fitKpf(short, REFERENCE_SPEC);
    expect(fit.estimated).toBe(false);
    expect(fit.parameters.theta).toBeNaN();
    expect(fit.warnings).toContain("XSH: 4 usable observations, fewer than the minimum of 8: no estimate (1 non-positive growth, 0 missing inputs).");
    expect(() => kpfCovariance(fit)).toThrow(/kpfCovariance: the fit has no estimate/);
  });

  it("leaves short economies out of a pooled fit", () => {
    const fit = fitKpf([...sim.panel.slice(0, 3), short], kpfSpec({ scope: "panel", covariance: { kind: "cluster" } }));
    expect(fit.economies).toEqual(["XAA", "XAB", "XAC"]);
    expect(fit.excluded.map((x) => x.economy)).toEqual(["XSH"]);
    expect(fit.excluded[0].reason).toMatch(/fewer than the minimum of 8: left out of the pooled fit/);
  });

  it("flags implausible estimates in words", () => {
    const fit = fitKpf(sim.panel[0], kpfSpec({ plausible: { theta: [0.5, 0.9] } }));
    expect(fit.warnings.some((w) => /^Implausible estimate: XAA's theta = 0\.\d+ lies outside the plausible range \[0\.5, 0\.9\]/.test(w))).toBe(true);
  });

  it("throws for several economies in economy scope", () => {
    expect(() => fitKpf(sim.panel, REFERENCE_SPEC)).toThrow('fitKpf: scope "economy" fits one economy at a time, got 8 (fit each, or use estimateKpf)');
  });

  it("does not mutate its input", () => {
    const before = JSON.stringify(sim.panel);
    fitKpf(sim.panel, kpfSpec({ scope: "panel", covariance: { kind: "cluster" }, smoothing: { kind: "trend", method: "hp" } }));
    expect(JSON.stringify(sim.panel)).toBe(before);
  });
});
