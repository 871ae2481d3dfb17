// JSON-stat 2.0 samples (json-stat.org/samples) from ../shared/data/formats/json-stat/2.0.
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { cellCoordinates, parseJsonStat } from "./jsonstat";

const dir = path.resolve(import.meta.dirname, "../../../shared/data/formats/json-stat/2.0");
const present = existsSync(dir);
if (!present) console.warn(`SKIP json-stat samples: ${dir} is absent (reference data lives outside the repository)`);
const read = (f: string) => readFileSync(path.join(dir, f));

describe.skipIf(!present)("JSON-stat 2.0 samples", () => {
  it("canada.json: missing category.index, object index, one status for all cells, metric units", async () => {
    const r = await parseJsonStat(read("canada.json"));
    expect(r.counts).toEqual({ observations: 120, skipped: 0, issues: 0 });
    // canada.json value[0] = 34880.5: country CA (single category, no index), year 2012, age T, concept POP, sex T; status ["a"]
    expect(r.observations[0]).toEqual({
      dimensions: { country: "CA", age: "T", concept: "POP", sex: "T" },
      period: "2012",
      value: 34880.5,
      attributes: { status: "a" },
      dataset: "http://json-stat.org/samples/canada.json",
    });
    // value[4] = 100: concept PERCENT (sizes [1,1,20,2,3], last dimension fastest), sex M
    expect(r.observations[4]).toMatchObject({ dimensions: { age: "T", concept: "PERCENT", sex: "M" }, value: 100 });
    expect(r.meta.prepared).toBe("2012-09-27");
    expect(r.meta.datasets[0]!.units!.POP).toEqual({ label: "thousands of persons", decimals: 1, type: "count", base: "people", multiplier: 3 });
  });

  it("oecd.json: sparse status object", async () => {
    const r = await parseJsonStat(read("oecd.json"));
    expect(r.counts.observations).toBe(432);
    // oecd.json status {"10": "e", ...}: cell 10 is area AU (index 0), year 2013 (index 10)
    expect(r.observations[10]).toMatchObject({ dimensions: { concept: "UNR", area: "AU" }, period: "2013", attributes: { status: "e" } });
    expect(r.observations[9]!.attributes).toEqual({});
  });

  it("galicia.json and us-gsp.json: dense arrays, role.time other than the last dimension", async () => {
    const g = await parseJsonStat(read("galicia.json"));
    expect(g.counts).toEqual({ observations: 3960, skipped: 0, issues: 0 }); // sizes 6 x 22 x 3 x 2 x 5 x 1
    // galicia.json value[0] = 2695880 (all totals, 2001), value[5] = 2772928 (all totals, 2011)
    expect(g.observations[0]).toMatchObject({ period: "2001", value: 2695880, dimensions: { residence: "T" } });
    expect(g.observations[5]).toMatchObject({ period: "2011", value: 2772928, dimensions: { residence: "T" } });
    const u = await parseJsonStat(read("us-gsp.json"));
    // us-gsp.json value[0..3] = 174400, 1.2, 4.8, 36333 for Alabama (01): gsp, perc, pop, capita
    expect(u.observations.slice(0, 4).map((o) => [o.dimensions.state, o.dimensions.concept, o.value])).toEqual([
      ["01", "gsp", 174400],
      ["01", "perc", 1.2],
      ["01", "pop", 4.8],
      ["01", "capita", 36333],
    ]);
  });

  it("hierarchy.json: sparse value, no time dimension", async () => {
    const r = await parseJsonStat(read("hierarchy.json"));
    // hierarchy.json value {"0": null}: one cell, commodity T, explicitly missing
    expect(r.observations).toEqual([{ dimensions: { commodity: "T" }, period: "", value: null, attributes: {}, dataset: "http://json-stat.org/samples/hierarchy.json" }]);
    expect(r.meta.datasets[0]!.timeDimension).toBeNull();
  });

  it("order.json: text cells are refused, and their text confirms the row-major order", async () => {
    const r = await parseJsonStat(read("order.json"), { mode: "collect" });
    expect(r.counts).toEqual({ observations: 0, skipped: 24, issues: 24 });
    expect(new Set(r.issues.map((i) => i.code))).toEqual(new Set(["JSONSTAT_VALUE_NOT_NUMERIC"]));
    // order.json names each cell after its categories: value[i] = "A{a}B{b}C{c}" ("what does not change, first").
    // Cell 11 reads "A1B1C4" in the sample where the rule gives A2B1C4 (a typo in the sample).
    const values = JSON.parse(read("order.json").toString()).value as string[];
    values.forEach((text, i) => {
      const [a, b, c] = cellCoordinates(i, [3, 2, 4]);
      const expected = `A${a! + 1}B${b! + 1}C${c! + 1}`;
      if (i === 11) expect(text).toBe("A1B1C4");
      else expect(text).toBe(expected);
    });
  });

  it("collection.json: items that are links only are listed for fetching", async () => {
    const r = await parseJsonStat(read("collection.json"));
    expect(r.observations).toEqual([]);
    expect(r.meta.links).toHaveLength(8);
    expect(r.meta.links[0]).toEqual({ href: "http://json-stat.org/samples/oecd.json", label: "Unemployment rate in the OECD countries 2003-2014", class: "dataset" });
  });

  it("oecd-canada-col.json: embedded datasets are read in turn, tagged with their href", async () => {
    const r = await parseJsonStat(read("oecd-canada-col.json"));
    expect(r.counts.observations).toBe(432 + 120);
    expect(new Set(r.observations.map((o) => o.dataset))).toEqual(new Set(["https://json-stat.org/samples/oecd.json", "https://json-stat.org/samples/canada.json"]));
  });
});
