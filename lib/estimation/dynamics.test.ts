import { describe, expect, it } from "vitest";
import {
  blowUpTime,
  capitalAugmentedSteadyStateGrowth,
  classifyRegime,
  classifyRegimeInterval,
  cointegrationSteadyStateGrowth,
  discreteGrowthPath,
  discreteSteadyState,
  fanChart,
  halfLife,
  halvingTime,
  integrateGrowthPath,
  longRunGrowth,
  projectTfpLevel,
  steadyStateGrowth,
  transitionPathClosedForm,
} from "./dynamics";

/** |actual - expected| <= tolerance, with the numbers in the failure message. */
function expectNear(actual: number | null | undefined, expected: number, tolerance: number): void {
  expect(actual, `expected ${expected} +/- ${tolerance}`).not.toBeNull();
  expect(Math.abs((actual as number) - expected), `actual ${actual}, expected ${expected} +/- ${tolerance}`).toBeLessThanOrEqual(tolerance);
}

function maxAbsDifference(x: readonly (number | null)[], y: readonly (number | null)[]): number {
  expect(x.length).toBe(y.length);
  let worst = 0;
  for (let i = 0; i < x.length; i++) {
    expect(x[i], `index ${i}`).not.toBeNull();
    expect(y[i], `index ${i}`).not.toBeNull();
    worst = Math.max(worst, Math.abs((x[i] as number) - (y[i] as number)));
  }
  return worst;
}

// The example of DOMAIN.md section 2: gamma = 0.5, n = 0.01, theta = 0.5, g0 = 0.03.
const example = { gamma: 0.5, theta: 0.5, n: 0.01 };

describe("steady states", () => {
  it("gives g* = gamma n / (1 - theta) = 0.01 for the DOMAIN.md example", () => {
    expectNear(steadyStateGrowth(example), 0.01, 1e-15); // [computed] DOMAIN.md section 2: g* = 0.01, tol 1e-15
    const longRun = longRunGrowth(example);
    expect(longRun.regime).toBe("converging");
    expectNear(longRun.gStar, 0.01, 1e-15); // [computed] DOMAIN.md section 2, tol 1e-15
    expectNear(longRun.kappa, 1, 1e-15); // kappa = gamma/(1 - theta) = 0.5/0.5, derived by hand, tol 1e-15
  });

  it("refuses a steady state for theta >= 1 and describes the regime instead", () => {
    expect(() => steadyStateGrowth({ ...example, theta: 1.2 })).toThrow(/theta = 1.2 >= 1, so there is no steady state \(explosive regime\)/);
    expect(() => steadyStateGrowth({ ...example, theta: 1 })).toThrow(/knife-edge/);
    expect(longRunGrowth({ ...example, theta: 1.2 })).toMatchObject({ regime: "explosive", gStar: null });
    expect(longRunGrowth({ ...example, theta: 1 })).toMatchObject({ regime: "knife-edge", gStar: null });
    expect(longRunGrowth({ ...example, theta: 0.97, tolerance: 0.05 })).toMatchObject({ regime: "knife-edge", gStar: null });
  });

  it("sends growth to zero, not to a negative g*, when research labour shrinks", () => {
    // With n < 0, 1/g grows without bound in the Bernoulli solution, so g -> 0 (derived by hand).
    const shrinking = longRunGrowth({ ...example, n: -0.01 });
    expect(shrinking.gStar).toBe(0);
    expect(shrinking.warnings.join(" ")).toMatch(/never reached/);
    const path = transitionPathClosedForm({ ...example, n: -0.01, g0: 0.03, years: 5000, step: 5000 });
    expect(path.growth[1] as number).toBeLessThan(1e-9); // decays towards 0, derived by hand
  });

  it("gives the capital-augmented and cointegration forms", () => {
    // (beta + gamma) n / (1 - theta - beta) = 0.7 * 0.01 / 0.5 = 0.014 [computed] DOMAIN.md section 2, tol 1e-15
    expectNear(capitalAugmentedSteadyStateGrowth({ gamma: 0.5, theta: 0.3, beta: 0.2, n: 0.01 }), 0.014, 1e-15);
    // beta = 0 reduces to gamma n / (1 - theta), derived by hand, tol 1e-15
    expectNear(capitalAugmentedSteadyStateGrowth({ ...example, beta: 0 }), steadyStateGrowth(example), 1e-15);
    expect(() => capitalAugmentedSteadyStateGrowth({ gamma: 0.5, theta: 0.7, beta: 0.3, n: 0.01 })).toThrow(/theta \+ beta = 1 >= 1/);
    // kappa = gamma/(1 - theta) makes the cointegration form equal to the structural one, tol 1e-15
    expectNear(cointegrationSteadyStateGrowth({ kappa: 0.5 / (1 - 0.5), n: 0.01 }), steadyStateGrowth(example), 1e-15);
  });
});

describe("regimes", () => {
  it("classifies theta with a tolerance band around 1", () => {
    expect(classifyRegime(0.5)).toBe("converging");
    expect(classifyRegime(1)).toBe("knife-edge");
    expect(classifyRegime(1 + 1e-12)).toBe("knife-edge");
    expect(classifyRegime(1.2)).toBe("explosive");
    expect(classifyRegime(0.96, { tolerance: 0.05 })).toBe("knife-edge");
    expect(classifyRegime(0.94, { tolerance: 0.05 })).toBe("converging");
    expect(() => classifyRegime(Number.NaN)).toThrow(/classifyRegime: theta must be a finite number/);
    expect(() => classifyRegime(0.5, { tolerance: -1 })).toThrow(/tolerance must be >= 0/);
  });

  it("says when an interval spans regimes", () => {
    const wide = classifyRegimeInterval(0.6, 1.3);
    expect(wide.regimes).toEqual(["converging", "knife-edge", "explosive"]);
    expect(wide.spansRegimes).toBe(true);
    expect(wide.words).toMatch(/cannot tell/);
    const narrow = classifyRegimeInterval(0.2, 0.6);
    expect(narrow).toMatchObject({ lower: "converging", upper: "converging", spansRegimes: false });
    expect(narrow.words).toMatch(/^Converging throughout/);
    expect(classifyRegimeInterval(0.9, 1.01, { tolerance: 0.05 }).regimes).toEqual(["converging", "knife-edge"]);
    expect(classifyRegimeInterval(-Infinity, 0.5).spansRegimes).toBe(false);
    expect(() => classifyRegimeInterval(1.1, 0.9)).toThrow(/lower end 1.1 is above upper end 0.9/);
  });
});

describe("transition path in closed form", () => {
  it("matches g(100) = 0.0167885 of DOMAIN.md section 2", () => {
    const path = transitionPathClosedForm({ ...example, g0: 0.03, years: 100, step: 1 });
    expect(path.times).toHaveLength(101);
    expect(path.growth[0]).toBe(0.03);
    expectNear(path.growth[100], 0.0167885, 1e-7); // [computed] DOMAIN.md section 2: g(100) = 0.0167885, tol 1e-7
    // Derived by hand: g* / (1 + ((g* - g0)/g0) e^{-a t}) with a = 0.005, t = 100, tol 1e-15
    expectNear(path.growth[100], 0.01 / (1 - (2 / 3) * Math.exp(-0.5)), 1e-15);
    expect(path.regime).toBe("converging");
    expect(path.blowUpTime).toBeNull();
  });

  it("handles n = 0: g(t) = g0 / (1 + b g0 t)", () => {
    const path = transitionPathClosedForm({ ...example, n: 0, g0: 0.03, years: 10, step: 10 });
    expectNear(path.growth[1], 0.03 / (1 + 0.5 * 0.03 * 10), 1e-15); // derived by hand from u' = b, tol 1e-15
  });

  it("is constant at the knife-edge with n = 0 and exponential with n > 0", () => {
    const flat = transitionPathClosedForm({ gamma: 0.5, theta: 1, n: 0, g0: 0.02, years: 50, step: 25 });
    expect(flat.growth).toEqual([0.02, 0.02, 0.02]); // DOMAIN.md section 2: with n = 0 growth is constant [computed]
    expect(flat.regime).toBe("knife-edge");
    const rising = transitionPathClosedForm({ gamma: 0.5, theta: 1, n: 0.01, g0: 0.02, years: 100, step: 100 });
    expectNear(rising.growth[1], 0.02 * Math.exp(0.5), 1e-15); // b = 0: g = g0 e^{a t}, derived by hand, tol 1e-15
  });

  it("rejects bad inputs with specific messages", () => {
    expect(() => transitionPathClosedForm({ ...example, g0: 0, years: 10 })).toThrow(/g0 must be positive, got 0/);
    expect(() => transitionPathClosedForm({ ...example, g0: 0.02, years: 10, step: 3 })).toThrow(/years = 10 is not a whole number of steps of 3/);
    expect(() => transitionPathClosedForm({ ...example, gamma: Number.NaN, g0: 0.02, years: 10 })).toThrow(/gamma must be a finite number/);
  });
});

describe("blow-up time", () => {
  it("gives t* = 162.2 (n = 0.01) and 250 (n = 0) for theta = 1.2, g0 = 0.02", () => {
    expectNear(blowUpTime({ gamma: 0.5, theta: 1.2, n: 0.01, g0: 0.02 }), 162.2, 0.05); // [computed] DOMAIN.md section 2 (printed to 0.1), tol 0.05
    expectNear(blowUpTime({ gamma: 0.5, theta: 1.2, n: 0.01, g0: 0.02 }), 200 * Math.log(2.25), 1e-10); // (1/a) ln(1 + a/((theta-1) g0)) by hand, tol 1e-10
    expectNear(blowUpTime({ gamma: 0.5, theta: 1.2, n: 0, g0: 0.02 }), 250, 1e-10); // [computed] DOMAIN.md section 2: 1/((theta-1) g0), tol 1e-10
  });

  it("is null without finite-time blow-up", () => {
    expect(blowUpTime({ ...example, g0: 0.02 })).toBeNull();
    expect(blowUpTime({ gamma: 0.5, theta: 1, n: 0.01, g0: 0.02 })).toBeNull();
    // theta > 1 with n < 0: blow-up only above the threshold a/(1 - theta) = 0.0167 (derived by hand)
    expect(blowUpTime({ gamma: 0.5, theta: 1.3, n: -0.01, g0: 0.01 })).toBeNull();
    expect(blowUpTime({ gamma: 0.5, theta: 1.3, n: -0.01, g0: 0.03 })).toBeGreaterThan(0);
  });

  it("makes the closed-form path null from t* on, and the integrator stop just before it", () => {
    const closed = transitionPathClosedForm({ gamma: 0.5, theta: 1.2, n: 0, g0: 0.02, years: 300, step: 1 });
    expect(closed.regime).toBe("explosive");
    expectNear(closed.blowUpTime, 250, 1e-10); // [computed] DOMAIN.md section 2, tol 1e-10
    expect(closed.growth[249]).not.toBeNull();
    expect(closed.growth[250]).toBeNull();
    expect(closed.warnings[0]).toMatch(/growth becomes infinite at t = 250/);
    const numeric = integrateGrowthPath({ gamma: 0.5, theta: 1.2, n: 0, g0: 0.02, years: 300, step: 1 });
    // g passes the ceiling 1e6 at t* - 1/((theta-1) 1e6) = 250 - 5e-6 (derived by hand), tol 1e-6
    expectNear(numeric.blowUpTime, 250 - 5e-6, 1e-6);
    expect(numeric.growth[250]).toBeNull();
    for (let t = 0; t < 250; t++) {
      const relative = Math.abs((numeric.growth[t] as number) / (closed.growth[t] as number) - 1);
      expect(relative, `t = ${t}`).toBeLessThan(1e-8); // integrator vs closed form, relative tol 1e-8 up to the blow-up
    }
  });
});

describe("numerical integration (Dormand-Prince 5(4))", () => {
  it("agrees with the closed form to 1e-9 on a whole path", () => {
    const closed = transitionPathClosedForm({ ...example, g0: 0.03, years: 300, step: 0.5 });
    const numeric = integrateGrowthPath({ ...example, g0: 0.03, years: 300, step: 0.5 });
    expect(maxAbsDifference(numeric.growth, closed.growth)).toBeLessThan(1e-9); // issue 3: closed form vs integrator, tol 1e-9 absolute
    expect(numeric.steps.accepted).toBeGreaterThan(0);
    // from below the steady state too, and for a different theta
    const below = { gamma: 0.8, theta: -0.5, n: 0.02 };
    const closedBelow = transitionPathClosedForm({ ...below, g0: 0.001, years: 400, step: 1 });
    const numericBelow = integrateGrowthPath({ ...below, g0: 0.001, years: 400, step: 1 });
    expect(maxAbsDifference(numericBelow.growth, closedBelow.growth)).toBeLessThan(1e-9); // tol 1e-9 absolute
  });

  it("integrates a per-year research-growth path exactly as the year-by-year closed form", () => {
    // n falls from 2% to 0.5% over 60 years, then stays: no closed form over the whole path, but n is
    // constant within each year, so chaining the closed form year by year is exact (derived by hand).
    const years = 80;
    const nPath = Array.from({ length: years }, (_, k) => Math.max(0.005, 0.02 - 0.00025 * k));
    const frozen = Object.freeze([...nPath]);
    const numeric = integrateGrowthPath({ gamma: 0.5, theta: 0.5, n: frozen, g0: 0.03, years, step: 1 });
    let g = 0.03;
    const chained: number[] = [g];
    for (let k = 0; k < years; k++) {
      g = transitionPathClosedForm({ gamma: 0.5, theta: 0.5, n: nPath[k], g0: g, years: 1, step: 1 }).growth[1] as number;
      chained.push(g);
    }
    expect(maxAbsDifference(numeric.growth, chained)).toBeLessThan(1e-9); // integrator vs chained closed form, tol 1e-9
    expect(frozen).toEqual(nPath); // input untouched
    // Output every quarter year: the jumps of n still fall on stops.
    const quarterly = integrateGrowthPath({ gamma: 0.5, theta: 0.5, n: frozen, g0: 0.03, years, step: 0.25 });
    expectNear(quarterly.growth[4 * years], chained[years], 1e-9); // same end point, tol 1e-9
  });

  it("integrates a smooth n(t) with a closed form at the knife-edge", () => {
    // theta = 1: g = g0 exp(gamma * integral of n); n(t) = c e^{-t/tau} integrates to c tau (1 - e^{-t/tau}).
    const c = 0.02;
    const tau = 30;
    const numeric = integrateGrowthPath({ gamma: 0.5, theta: 1, n: (t) => c * Math.exp(-t / tau), g0: 0.01, years: 100, step: 1 });
    const exact = numeric.times.map((t) => 0.01 * Math.exp(0.5 * c * tau * (1 - Math.exp(-t / tau))));
    expect(maxAbsDifference(numeric.growth, exact)).toBeLessThan(1e-12); // derived by hand, tol 1e-12
  });

  it("rejects misuse with specific messages", () => {
    expect(() => integrateGrowthPath({ ...example, n: [0.01, 0.01], g0: 0.02, years: 5 })).toThrow(
      /integrateGrowthPath: n has 2 entries but the path spans 5 years \(needs 5, one per year\)/,
    );
    expect(() => integrateGrowthPath({ ...example, n: () => Number.NaN, g0: 0.02, years: 5 })).toThrow(/n\(0\) returned NaN/);
    expect(() => integrateGrowthPath({ ...example, g0: -0.01, years: 5 })).toThrow(/g0 must be positive, got -0.01/);
  });
});

describe("half-life", () => {
  it("is ln 2 / (gamma n), about 139 years for gamma n = 0.005", () => {
    const result = halfLife({ gamma: 0.5, n: 0.01 });
    expectNear(result.years, 139, 0.5); // [computed] DOMAIN.md section 2: "about 139 years", tol 0.5
    expectNear(result.years, Math.LN2 / 0.005, 1e-12); // formula, tol 1e-12
  });

  it("halves the gap 1/g - 1/g* exactly, and g - g* near g*", () => {
    const h = halfLife({ gamma: 0.5, n: 0.01 }).years as number;
    const path = transitionPathClosedForm({ ...example, g0: 0.03, years: h, step: h });
    const inverseGap = (g: number) => 1 / g - 1 / 0.01;
    expectNear(inverseGap(path.growth[1] as number) / inverseGap(0.03), 0.5, 1e-12); // logistic solution, derived by hand, tol 1e-12
    const near = transitionPathClosedForm({ ...example, g0: 0.01 * 1.0001, years: h, step: h });
    expectNear(((near.growth[1] as number) - 0.01) / (0.01 * 0.0001), 0.5, 1e-4); // linearisation near g*, tol 1e-4
  });

  it("gives no half-life without convergence, with a reason", () => {
    expect(halfLife({ gamma: 0.5, n: 0 })).toEqual({ years: null, reason: expect.stringMatching(/no positive steady state/) });
    expect(halfLife({ gamma: 0.5, n: -0.01 }).reason).toMatch(/decays towards zero/);
  });

  it("gives halving times of a steady decline", () => {
    expectNear(halvingTime(0.05), Math.LN2 / 0.05, 1e-12); // ln 2 / rate, tol 1e-12
    expectNear(0.95 ** halvingTime(0.05, { compounding: "annual" }), 0.5, 1e-12); // (1 - d)^t = 1/2, tol 1e-12
    expect(() => halvingTime(0)).toThrow(/rate must be positive/);
  });
});

describe("discrete time", () => {
  it("follows the recursion g_{t+1} = g_t (1+n)^gamma (1+g_t)^(theta-1) derived from A_t - A_{t-1} = B R_{t-1}^gamma A_{t-1}^theta", () => {
    // Simulate the law of motion itself (B = 0.02, R_0 = 1, A_0 = 1) and compare growth rates.
    const gamma = 0.7;
    const theta = 0.4;
    const nPath = Array.from({ length: 60 }, (_, k) => 0.03 - 0.0004 * k);
    const B = 0.02;
    const R = [1];
    for (const rate of nPath) R.push(R[R.length - 1] * (1 + rate));
    const A = [1];
    for (let t = 1; t <= 61; t++) A.push(A[t - 1] + B * R[t - 1] ** gamma * A[t - 1] ** theta);
    const simulated = A.slice(1).map((level, t) => level / A[t] - 1); // g_1 ... g_61, g_t = A_t/A_{t-1} - 1
    // g_{t+1} uses R_t / R_{t-1} = 1 + nPath[t-1]: the recursion's n[k] is the growth of R into period k.
    const path = discreteGrowthPath({ gamma, theta, n: nPath, g0: simulated[0], periods: 60 });
    for (let t = 0; t <= 60; t++) {
      expect(Math.abs((path.growth[t] as number) / simulated[t] - 1), `period ${t}`).toBeLessThan(1e-12); // exact recursion, tol 1e-12 relative
    }
  });

  it("converges to the discrete steady state, close to the continuous one for small n", () => {
    const params = { gamma: 1, theta: 0.5, n: 0.01 };
    const discrete = discreteSteadyState(params);
    expectNear(discrete, 1.01 ** 2 - 1, 1e-15); // (1+n)^(gamma/(1-theta)) - 1 [computed] DOMAIN.md section 2, tol 1e-15
    expectNear(Math.log1p(discrete), 2 * Math.log1p(0.01), 1e-15); // equal to the continuous result in log rates, tol 1e-15
    expectNear(discrete - steadyStateGrowth(params), 0.01 ** 2, 1e-15); // (1+n)^2 - 1 - 2n = n^2, derived by hand, tol 1e-15
    const small = { gamma: 0.5, theta: 0.2, n: 0.001 };
    expect(Math.abs(discreteSteadyState(small) / steadyStateGrowth(small) - 1)).toBeLessThan(small.n); // relative gap of order n
    const path = discreteGrowthPath({ ...params, g0: 0.05, periods: 3000 });
    expectNear(path.growth[3000], discrete, 1e-12); // the recursion converges to its fixed point, tol 1e-12
    expect(() => discreteSteadyState({ ...params, theta: 1 })).toThrow(/theta = 1 >= 1/);
    expect(() => discreteGrowthPath({ ...params, n: [0.01], g0: 0.05, periods: 3 })).toThrow(/n has 1 entries but periods is 3/);
    expect(() => discreteGrowthPath({ ...params, g0: 0.05, periods: 2.5 })).toThrow(/periods must be a positive integer, got 2.5/);
  });
});

describe("TFP levels and fan charts", () => {
  it("integrates a continuous growth path into levels (trapezoid, error of order step^2)", () => {
    const path = transitionPathClosedForm({ ...example, g0: 0.03, years: 100, step: 0.1 });
    const { level } = projectTfpLevel({ A0: 2, growth: path.growth, step: 0.1 });
    // Exact: ln(A(t)/A0) = (1/b) ln(1 + b g0 (e^{a t} - 1)/a), derived by hand from the Bernoulli solution.
    const exactLog = (1 / 0.5) * Math.log(1 + (0.5 * 0.03 * Math.expm1(0.005 * 100)) / 0.005);
    expectNear(Math.log((level[1000] as number) / 2), exactLog, 1e-6); // trapezoid bound step^2/12 max|g''| T = 6e-7, tol 1e-6
  });

  it("compounds a discrete growth path exactly", () => {
    const growth = [0.01, 0.02, -0.01, 0.03];
    const { level } = projectTfpLevel({ A0: 1, growth, compounding: "discrete" });
    expectNear(level[3], 1.02 * 0.99 * 1.03, 1e-15); // chain-linking, common practice, tol 1e-15
    const broken = projectTfpLevel({ A0: 1, growth: [0.01, 0.02, null, 0.03], compounding: "discrete" });
    expect(broken.level).toEqual([1, 1.02, null, null]);
    expect(broken.warnings[0]).toMatch(/point 2/);
    expect(() => projectTfpLevel({ A0: 0, growth })).toThrow(/A0 must be positive/);
  });

  it("gives type-7 quantile bands per year", () => {
    const draws = [[5], [1], [4], [2], [3]];
    const chart = fanChart(draws, [0, 0.1, 0.25, 0.5, 1]);
    // Hyndman & Fan (1996) type 7 on 1..5: position q (m - 1); q = 0.1 -> 1.4, q = 0.25 -> 2 (by hand), tol 1e-15
    [1, 1.4, 2, 3, 5].forEach((expected, i) => expectNear(chart.bands[i][0], expected, 1e-15));
    expect(draws).toEqual([[5], [1], [4], [2], [3]]); // input untouched
  });

  it("puts the path of the median theta on the median band (g(t) rises with theta)", () => {
    const thetas = [0.1, 0.3, 0.45, 0.5, 0.55, 0.7, 0.8];
    const paths = thetas.map((theta) => transitionPathClosedForm({ gamma: 0.5, theta, n: 0.01, g0: 0.03, years: 50, step: 1 }).growth);
    const chart = fanChart(paths, [0.05, 0.5, 0.95]);
    expect(chart.bands[1]).toEqual(paths[3]); // odd number of draws: the middle order statistic (type 7), exact
    expect(chart.used.every((u) => u === 7)).toBe(true);
    for (let t = 1; t <= 50; t++) expect(chart.bands[0][t] as number).toBeLessThan(chart.bands[2][t] as number);
  });

  it("keeps blown-up draws at the top when asked", () => {
    const paths = [
      [0.01, 0.02],
      [0.01, null],
      [0.01, 0.03],
    ];
    expect(fanChart(paths, [1]).bands[0][1]).toBe(0.03);
    expect(fanChart(paths, [1], { missing: "infinite" }).bands[0][1]).toBe(Infinity);
    expect(fanChart(paths, [0.5]).warnings[0]).toMatch(/1 missing values/);
    expect(() => fanChart([[1, 2], [1]], [0.5])).toThrow(/draw 1 has 1 values but draw 0 has 2/);
    expect(() => fanChart([[1]], [1.5])).toThrow(/quantiles\[0\] = 1.5 is outside \[0, 1\]/);
  });
});
