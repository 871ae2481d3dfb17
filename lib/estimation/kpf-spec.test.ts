import { describe, expect, it } from "vitest";
import {
  NAMED_KPF_SPECS,
  REFERENCE_PANEL_SPEC,
  REFERENCE_SPEC,
  TEAM_DEFAULT_SPEC,
  deriveKpfSpec,
  describeKpfSpec,
  kpfSpec,
  namedKpfSpec,
} from "./kpf-spec";

describe("the reference spec", () => {
  it("is exactly what issue 3 defines", () => {
    // issue 3, "a spec named reference": every field checked against the issue text
    expect(REFERENCE_SPEC).toMatchObject({
      name: "reference",
      form: "log-linear", // log-linear on annual growth
      scope: "economy",
      smoothing: { kind: "annual" },
      nonPositiveGrowth: "drop", // non-positive years dropped
      lagYears: 1, // inputs lagged one year
      restrictions: { gamma: null, theta: null },
      covariance: { kind: "HAC", lags: "auto", adjust: true }, // Bartlett, floor(4(T/100)^(2/9)), no prewhitening, T/(T-k)
      level: 0.9, // 90% intervals
      researchGrowth: { kind: "window", source: "researchers", window: 10, method: "endpoints" }, // n over [t1-10, t1)
      minObservations: 8, // fewer than 8 usable observations: no estimate
      bootstrap: { draws: 999, blockLength: "auto" }, // 999 block-bootstrap draws
    });
    expect(Object.isFrozen(REFERENCE_SPEC)).toBe(true);
    expect(Object.isFrozen(REFERENCE_SPEC.bootstrap)).toBe(true);
  });

  it("reference-panel pools with fixed effects, gamma = 1 and clustering by economy", () => {
    // issue 3, "a spec named reference-panel"
    expect(REFERENCE_PANEL_SPEC).toMatchObject({
      name: "reference-panel",
      form: "log-linear",
      scope: "panel",
      smoothing: { kind: "annual" },
      lagYears: 1,
      restrictions: { gamma: 1, theta: null },
      covariance: { kind: "cluster" },
      level: 0.9,
      minObservations: 8,
      bootstrap: { draws: 999 },
    });
  });

  it("team-default is the restricted panel on HP-trend growth", () => {
    expect(TEAM_DEFAULT_SPEC).toMatchObject({
      scope: "panel",
      restrictions: { gamma: 1, theta: null },
      smoothing: { kind: "trend", method: "hp", lambda: 100 },
      covariance: { kind: "cluster" },
      bootstrap: { panelScheme: "economies" },
    });
    expect(Object.keys(NAMED_KPF_SPECS)).toEqual(["reference", "reference-panel", "team-default"]);
    expect(namedKpfSpec("team-default")).toBe(TEAM_DEFAULT_SPEC);
    expect(() => namedKpfSpec("default")).toThrow('unknown spec "default": the named specs are reference, reference-panel, team-default');
  });
});

describe("kpfSpec", () => {
  it("fills defaults and keeps what is given", () => {
    const spec = kpfSpec({ form: "log-linear", smoothing: { kind: "average", years: 5 }, lagYears: 2 });
    expect(spec.smoothing).toEqual({ kind: "average", years: 5, overlapping: false });
    expect(spec.lagYears).toBe(2);
    expect(spec.covariance).toEqual({ kind: "HAC", lags: "auto", adjust: true });
    expect(kpfSpec({ smoothing: { kind: "trend" } }).smoothing).toEqual({ kind: "trend", method: "rolling-log-linear", years: 5 });
    expect(kpfSpec({ smoothing: { kind: "trend", method: "hp" } }).smoothing).toEqual({ kind: "trend", method: "hp", lambda: 100 });
    expect(kpfSpec({ form: "cointegration" }).lagYears).toBe(0);
    expect(kpfSpec({ researchGrowth: { kind: "given", value: 0.01 } }).nUncertainty).toBe("none");
  });

  it("throws naming the field for values out of range", () => {
    expect(() => kpfSpec({ level: 1.2 })).toThrow("kpfSpec: level must be in (0, 1), got 1.2");
    expect(() => kpfSpec({ lagYears: 1.5 })).toThrow("kpfSpec: lagYears must be an integer in [0, 10], got 1.5");
    expect(() => kpfSpec({ smoothing: { kind: "average", years: 1 } })).toThrow("kpfSpec: smoothing.years must be an integer in [2, 20], got 1");
    expect(() => kpfSpec({ form: "spline" as never })).toThrow('kpfSpec: form must be one of "log-linear", "levels-nls", "cointegration", "capital-augmented", got "spline"');
    expect(() => kpfSpec({ bootstrap: { draws: -1 } })).toThrow("kpfSpec: bootstrap.draws must be an integer in [0, 1000000], got -1");
    expect(() => kpfSpec({ plausible: { theta: [2, 1] } })).toThrow("kpfSpec: plausible.theta must be numbers with low <= high, got [2,1]");
    expect(() => kpfSpec({ covariance: { kind: "HAC", lags: -2 } })).toThrow("kpfSpec: covariance.lags must be an integer in [0, 50], got -2");
    expect(() => kpfSpec({ restrictions: { gamma: Number.NaN } })).toThrow("kpfSpec: restrictions.gamma must be a finite number, got null");
  });

  it("refuses combinations that make no sense, saying why", () => {
    expect(() => kpfSpec({ covariance: { kind: "cluster" } })).toThrow('kpfSpec: covariance is "cluster" (by economy), which needs scope "panel"');
    expect(() => kpfSpec({ form: "levels-nls", smoothing: { kind: "average", years: 5 } })).toThrow(/smoothing must be "annual" for the levels-nls form/);
    expect(() => kpfSpec({ lagYears: 0 })).toThrow(/lagYears must be at least 1 for the log-linear form/);
    expect(() => kpfSpec({ leadsLags: 2 })).toThrow("kpfSpec: leadsLags applies to the cointegration form only, got 2 for log-linear");
    expect(() => kpfSpec({ form: "cointegration", restrictions: { gamma: 1, theta: 0 } })).toThrow(/fix gamma or theta in the cointegration form, not both/);
  });

  it("derives a spec from a base with nested overrides", () => {
    const derived = deriveKpfSpec(REFERENCE_SPEC, { bootstrap: { draws: 0 }, smoothing: { kind: "average", years: 5, overlapping: true } });
    expect(derived.bootstrap).toEqual({ ...REFERENCE_SPEC.bootstrap, draws: 0 });
    expect(derived.smoothing).toEqual({ kind: "average", years: 5, overlapping: true });
    expect(derived.name).toBe("reference+");
    expect(REFERENCE_SPEC.bootstrap.draws).toBe(999); // the base is not mutated
    expect(deriveKpfSpec(REFERENCE_PANEL_SPEC, { restrictions: { gamma: null } }).restrictions).toEqual({ gamma: null, theta: null });
  });

  it("describes a spec in words", () => {
    expect(describeKpfSpec(REFERENCE_SPEC)).toBe(
      "log-linear, one economy at a time, annual growth, inputs lagged 1 year, no restrictions, " +
        "standard errors HAC (Bartlett, lag floor(4 (T/100)^(2/9)), adjust T/(T-k)), 90% intervals, " +
        "n from researchers over 10 years (endpoints), at least 8 observations, 999 bootstrap draws (seed 20240611)",
    );
    expect(describeKpfSpec(TEAM_DEFAULT_SPEC)).toContain("pooled panel with economy fixed effects, HP-trend growth (lambda 100)");
  });
});
