import { describe, expect, it } from "vitest";
import { KpfSpecError, NAMED_KPF_SPECS, REFERENCE_SPEC, TEAM_DEFAULT_SPEC, kpfSpecFromJson, kpfSpecFromValue, kpfSpecInputSchema } from "./kpf-spec";

function specError(run: () => unknown): KpfSpecError {
  try {
    run();
  } catch (err) {
    expect(err).toBeInstanceOf(KpfSpecError);
    return err as KpfSpecError;
  }
  throw new Error("expected a KpfSpecError");
}

describe("kpf spec schema", () => {
  it("exports the named specs as data", () => {
    expect(NAMED_KPF_SPECS.reference).toBe(REFERENCE_SPEC);
    expect(NAMED_KPF_SPECS["team-default"]).toBe(TEAM_DEFAULT_SPEC);
  });

  it("accepts every named spec's own fields (a spec written out reads back the same)", () => {
    for (const spec of Object.values(NAMED_KPF_SPECS)) {
      const roundTrip = kpfSpecFromValue(JSON.parse(JSON.stringify(spec)), "named");
      expect(roundTrip).toEqual(spec);
    }
  });

  it("starts from a base and overrides nested fields", () => {
    const spec = kpfSpecFromValue({ base: "team-default", bootstrap: { draws: 199 }, smoothing: { kind: "average", years: 5, overlapping: true } });
    expect(spec.name).toBe("team-default+file");
    expect(spec.bootstrap).toEqual({ ...TEAM_DEFAULT_SPEC.bootstrap, draws: 199 });
    expect(spec.smoothing).toEqual({ kind: "average", years: 5, overlapping: true });
    expect(spec.restrictions).toEqual({ gamma: 1, theta: null });
  });

  it("names the field of a shape error", () => {
    expect(specError(() => kpfSpecFromValue({ bootstrap: { draws: "many" } }, "s.json")).path).toBe("bootstrap.draws");
    expect(specError(() => kpfSpecFromValue({ form: "spline" }, "s.json")).message).toMatch(/^s\.json: form: Invalid option/);
    expect(specError(() => kpfSpecFromValue({ colour: "red" }, "s.json")).message).toMatch(/^s\.json: \(top level\): Unrecognized key/);
    expect(specError(() => kpfSpecFromValue({ smoothing: { kind: "trend", method: "hp", years: 5 } }, "s.json")).path).toBe("smoothing");
    expect(specError(() => kpfSpecFromValue({ base: "default" }, "s.json")).path).toBe("base");
  });

  it("names the field of a range or combination error found by kpfSpec", () => {
    const e = specError(() => kpfSpecFromValue({ level: 0 }, "s.json"));
    expect(e.message).toBe("s.json: kpfSpec: level must be in (0, 1), got 0");
    expect(e.path).toBe("level");
    expect(specError(() => kpfSpecFromValue({ covariance: { kind: "cluster" } }, "s.json")).path).toBe("covariance");
  });

  it("reports invalid JSON", () => {
    expect(specError(() => kpfSpecFromJson("{ form: 1 }", "s.json")).message).toMatch(/^s\.json: not valid JSON \(/);
    expect(kpfSpecFromJson('{"scope":"panel","covariance":{"kind":"cluster"}}', "my.json").scope).toBe("panel");
  });

  it("types the input shape for other boundaries", () => {
    expect(kpfSpecInputSchema.safeParse({ restrictions: { gamma: 1, theta: null } }).success).toBe(true);
    expect(kpfSpecInputSchema.safeParse({ restrictions: { gamma: "1" } }).success).toBe(false);
  });
});
