// JSON-stat 2.0 shapes (json-stat.org/format): value and status as array or object, category.index
// as array, object or absent, and the size checks.
import { describe, expect, it } from "vitest";
import { parseJsonStat } from "./jsonstat";

function dataset(parts: Record<string, unknown>): string {
  return JSON.stringify({
    version: "2.0",
    class: "dataset",
    id: ["geo", "time"],
    size: [2, 3],
    role: { time: ["time"] },
    dimension: { geo: { category: { index: { DE: 1, FR: 0 } } }, time: { category: { index: ["2019", "2020-Q1", "2020Q2"] } } },
    value: [1, 2, 3, 4, 5, 6],
    ...parts,
  });
}

describe("JSON-stat value and status forms", () => {
  it("object index gives positions; periods are normalised, compact 2020Q2 included", async () => {
    const r = await parseJsonStat(dataset({}));
    expect(r.observations.map((o) => [o.dimensions.geo, o.period, o.value])).toEqual([
      ["FR", "2019", 1],
      ["FR", "2020-Q1", 2],
      ["FR", "2020-Q2", 3],
      ["DE", "2019", 4],
      ["DE", "2020-Q1", 5],
      ["DE", "2020-Q2", 6],
    ]);
  });

  it("sparse value object: only the cells given, in cell order", async () => {
    const r = await parseJsonStat(dataset({ value: { "5": 60, "1": null } }));
    expect(r.observations.map((o) => [o.dimensions.geo, o.period, o.value])).toEqual([
      ["FR", "2020-Q1", null],
      ["DE", "2020-Q2", 60],
    ]);
  });

  it("status as one string, as one-entry array, as full array, as object", async () => {
    const statuses = async (status: unknown) => (await parseJsonStat(dataset({ status }))).observations.map((o) => o.attributes.status ?? "-").join("");
    expect(await statuses("p")).toBe("pppppp");
    expect(await statuses(["e"])).toBe("eeeeee");
    expect(await statuses(["a", null, "b", "", "c", "d"])).toBe("a-b-cd");
    expect(await statuses({ "2": "x", "3": "y" })).toBe("--xy--");
  });

  it("uses the timeDimension option when role.time is absent", async () => {
    const r = await parseJsonStat(dataset({ role: undefined }), { timeDimension: "time" });
    expect(r.observations[0]!.period).toBe("2019");
    const none = await parseJsonStat(dataset({ role: undefined }));
    expect(none.observations[0]).toMatchObject({ period: "", dimensions: { geo: "FR", time: "2019" } });
  });
});

describe("JSON-stat size checks", () => {
  it("value count against the product of sizes", async () => {
    await expect(parseJsonStat(dataset({ value: [1, 2, 3, 4, 5] }))).rejects.toMatchObject({ code: "JSONSTAT_SIZE_MISMATCH", location: { path: "$.value" } });
  });
  it("object index positions must be 0..n-1", async () => {
    const text = dataset({}).replace('"DE":1', '"DE":2');
    await expect(parseJsonStat(text)).rejects.toMatchObject({ code: "JSONSTAT_INDEX_OUT_OF_RANGE", location: { path: "$.dimension.geo.category.index.DE", field: "geo" } });
  });
  it("status array of the wrong length", async () => {
    const r = await parseJsonStat(dataset({ status: ["a", "b"] }), { mode: "collect" });
    expect(r.issues[0]).toMatchObject({ code: "JSONSTAT_SIZE_MISMATCH", location: { path: "$.status" } });
  });
  it("a bad time category is reported once at the category and its cells are skipped", async () => {
    const text = dataset({}).replace('"2020Q2"', '"2020 Q2"');
    const r = await parseJsonStat(text, { mode: "collect" });
    expect(r.issues).toHaveLength(1);
    expect(r.issues[0]).toMatchObject({ code: "PERIOD_UNKNOWN_FORMAT", location: { path: "$.dimension.time.category.index[2]", field: "time" } });
    expect(r.counts).toEqual({ observations: 4, skipped: 2, issues: 1 });
  });
});
