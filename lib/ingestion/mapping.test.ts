import { describe, expect, it } from "vitest";
import { mapObservations } from "./mapping";
import { parseSourceDefinition } from "./sources";
import type { RawObservation } from "./types";

const def = parseSourceDefinition({
  name: "m",
  title: "m",
  kind: "demo",
  format: "sdmx-csv",
  queries: [
    { id: "POP", concept: "population", unit: "persons", scale: 1000, economyDimension: "REF_AREA", filters: { MEASURE: "POP" } },
    { id: "TFP", concept: "tfp_index", unit: "{UNIT_MEASURE}", economyDimension: "REF_AREA", filters: { MEASURE: "TFP" } },
  ],
  economyCodeMap: { EL: "GRC" },
});

const raw = (dims: Record<string, string>, value: number | null, attributes: Record<string, string> = {}): RawObservation => ({ dimensions: dims, period: "2020", value, attributes });

describe("mapping observations to economies, concepts and units", () => {
  it("applies filters, scale, economy codes and status", () => {
    const r = mapObservations(def, [raw({ REF_AREA: "FR", MEASURE: "POP" }, 67.4, { OBS_STATUS: "P" }), raw({ REF_AREA: "EL", MEASURE: "POP" }, 10.4)]);
    expect(r.observations).toEqual([
      { economy: "FRA", concept: "population", unit: "persons", seriesKey: "POP", period: "2020", value: 67400, status: "P" },
      { economy: "GRC", concept: "population", unit: "persons", seriesKey: "POP", period: "2020", value: 10400, status: null },
    ]);
  });

  it("reads the unit from the data when the query says {NAME}", () => {
    const r = mapObservations(def, [raw({ REF_AREA: "XAL", MEASURE: "TFP", UNIT_MEASURE: "index, 2020=100" }, 100)]);
    expect(r.observations[0]!.unit).toBe("index, 2020=100");
    const missing = mapObservations(def, [raw({ REF_AREA: "XAL", MEASURE: "TFP" }, 100)]);
    expect(missing.issues[0]).toMatchObject({ code: "MAP_NO_UNIT", index: 0 });
  });

  it("counts unmatched series and reports unknown economies with their code", () => {
    const r = mapObservations(def, [raw({ REF_AREA: "FR", MEASURE: "GDP" }, 1), raw({ REF_AREA: "EU27_2020", MEASURE: "POP" }, 1)]);
    expect(r.unmatched).toBe(1);
    expect(r.issues).toEqual([expect.objectContaining({ code: "MAP_UNKNOWN_ECONOMY", value: "EU27_2020", index: 1 })]);
  });

  it("reports an unknown code once with its count and place, or skips such codes when asked", () => {
    const rows = [1, 2, 3].map((i) => ({ ...raw({ REF_AREA: "EU28", MEASURE: "POP" }, i), location: { line: i + 1 } }));
    const r = mapObservations(def, rows);
    expect(r.issues).toHaveLength(1);
    expect(r.issues[0]!.message).toBe('line 2: economy code "EU28" has no ISO 3166-1 alpha-3 equivalent (map it in economyCodeMap, or skip such codes) (3 observations)');
    const skipped = mapObservations(def, rows, undefined, { skipUnknownEconomies: true });
    expect(skipped.issues).toEqual([]);
    expect(skipped.skippedEconomies).toEqual({ EU28: 3 });
  });

  it("keeps explicitly missing values as null", () => {
    expect(mapObservations(def, [raw({ REF_AREA: "FR", MEASURE: "POP" }, null)]).observations[0]!.value).toBeNull();
  });
});
