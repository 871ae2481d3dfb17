// World Bank indicators API v2 JSON: [ {page, pages, per_page, total, lastupdated}, [ {indicator,
// country, countryiso3code, date, value, unit, obs_status, decimal} ] ] (DOMAIN.md section 6,
// World Bank API v2 documentation). Inline fixtures follow that documented shape.
import { describe, expect, it } from "vitest";
import { parseWorldBank } from "./worldbank";

const row = (iso3: string, date: string, value: unknown, extra: Record<string, unknown> = {}) => ({
  indicator: { id: "SP.POP.SCIE.RD.P6", value: "Researchers in R&D (per million people)" },
  country: { id: iso3.slice(0, 2), value: iso3 },
  countryiso3code: iso3,
  date,
  value,
  unit: "",
  obs_status: "",
  decimal: 0,
  ...extra,
});
const page = (head: Record<string, unknown>, rows: unknown) => JSON.stringify([{ page: 1, pages: 3, per_page: "2", total: 6, sourceid: "2", lastupdated: "2026-04-01", ...head }, rows]);

describe("World Bank API v2", () => {
  it("reads observations and the paging header (per_page arrives as a string)", async () => {
    const r = await parseWorldBank(page({}, [row("FRA", "2019", 4773.97249), row("FRA", "2018", null, { obs_status: "E" })]));
    expect(r.observations).toEqual([
      { dimensions: { indicator: "SP.POP.SCIE.RD.P6", country: "FRA" }, period: "2019", value: 4773.97249, attributes: { decimal: "0" }, dataset: "SP.POP.SCIE.RD.P6" },
      { dimensions: { indicator: "SP.POP.SCIE.RD.P6", country: "FRA" }, period: "2018", value: null, attributes: { obs_status: "E", decimal: "0" }, dataset: "SP.POP.SCIE.RD.P6" },
    ]);
    expect(r.meta.pagination).toEqual({ page: 1, pages: 3, perPage: 2, total: 6 });
    expect(r.meta.prepared).toBe("2026-04-01");
    expect(r.meta.datasets).toEqual([{ id: "SP.POP.SCIE.RD.P6", label: "Researchers in R&D (per million people)", timeDimension: "date", updated: "2026-04-01" }]);
  });

  it("uses country.id when countryiso3code is empty, and reads quarterly dates", async () => {
    const r = await parseWorldBank(page({}, [{ ...row("", "2019Q3", 1), country: { id: "1W", value: "World" } }]));
    expect(r.observations[0]).toMatchObject({ dimensions: { country: "1W" }, period: "2019-Q3" });
  });

  it("turns the API's error body into WORLDBANK_API_ERROR with the message id", async () => {
    const body = JSON.stringify([{ message: [{ id: "175", key: "Invalid format", value: "The indicator was not found. It may have been deleted or archived." }] }]);
    await expect(parseWorldBank(body)).rejects.toMatchObject({ code: "WORLDBANK_API_ERROR", value: "175", location: { path: "$[0].message[0]" } });
  });

  it("reads a page without data (null) as empty", async () => {
    const r = await parseWorldBank(page({ pages: 0, total: 0 }, null));
    expect(r.observations).toEqual([]);
    expect(r.meta.pagination).toEqual({ page: 1, pages: 0, perPage: 2, total: 0 });
  });

  it("reports a value that is text, and a header without paging", async () => {
    const r = await parseWorldBank(page({}, [row("FRA", "2019", "high")]), { mode: "collect" });
    expect(r.issues[0]).toMatchObject({ code: "WORLDBANK_VALUE_NOT_NUMERIC", location: { path: "$[1][0].value", field: "value" } });
    await expect(parseWorldBank(JSON.stringify([{ page: 1 }, []]))).rejects.toMatchObject({ code: "JSON_UNEXPECTED_SHAPE", location: { path: "$[0].pages", field: "pages" } });
  });
});
