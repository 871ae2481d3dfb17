// Options are validated (zod) before the first byte is read: a misuse never consumes the input.
import { describe, expect, it } from "vitest";
import { parsePayload, type PayloadFormat } from "./parse";

function untouchable(): AsyncIterable<Uint8Array> & { touched: boolean } {
  const it = {
    touched: false,
    [Symbol.asyncIterator]() {
      it.touched = true;
      throw new Error("the input was read");
    },
  };
  return it;
}

describe("option validation", () => {
  it.each<[PayloadFormat, Record<string, unknown>, string]>([
    ["sdmx-json", { mode: "loose" }, "mode"],
    ["sdmx-json", { colour: "red" }, "colour"],
    ["sdmx-csv", { separator: "#" }, "separator"],
    ["sdmx-csv", { maxIssues: 0 }, "maxIssues"],
    ["jsonstat", { timeDimension: "" }, "timeDimension"],
    ["worldbank-json", { nonNegative: "yes" }, "nonNegative"],
    ["csv", {}, "map"],
    ["csv", { map: "economy=A", layout: "long" }, "map"],
    ["csv", { map: "economy=A", layout: "wide", periodColumns: "(" }, "periodColumns"],
  ])("%s %j -> OPTIONS_INVALID naming %s, input untouched", async (format, options, field) => {
    const input = untouchable();
    await expect(parsePayload(format, input, options)).rejects.toMatchObject({ code: "OPTIONS_INVALID", location: { field } });
    expect(input.touched).toBe(false);
  });

  it("refuses an unknown format", async () => {
    await expect(parsePayload("xml" as PayloadFormat, "")).rejects.toMatchObject({ code: "OPTIONS_INVALID", location: { field: "format" } });
  });

  it("throws OPTIONS_INVALID in collect mode too (misuse is not a data problem)", async () => {
    await expect(parsePayload("sdmx-csv", "", { mode: "collect", timeColumn: 3 })).rejects.toMatchObject({ code: "OPTIONS_INVALID", location: { field: "timeColumn" } });
  });
});
