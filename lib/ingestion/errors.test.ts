// IngestError: fixed code list, located messages, JSON paths.
import { describe, expect, it } from "vitest";
import { describeLocation, INGEST_ERROR_CODES, IngestError, IssueCollector, isIngestErrorCode, jsonPath } from "./errors";

describe("IngestError", () => {
  it("names the place first, as in the house style's example", () => {
    // STYLE.md "Ingestion: every problem has a code and a place" / issue 4 wording
    const e = new IngestError("CSV_NON_NUMERIC_VALUE", "sdmx-csv", { line: 12, column: 4, field: "OBS_VALUE" }, "'abc' is not a number", "abc");
    expect(e.message).toBe("line 12, column 4 (field OBS_VALUE): 'abc' is not a number");
    expect(e.code).toBe("CSV_NON_NUMERIC_VALUE");
    expect(e.source).toBe("sdmx-csv");
    expect(e.value).toBe("abc");
    expect(e).toBeInstanceOf(Error);
  });

  it("describes file, line, JSON path and field", () => {
    expect(describeLocation({ file: "a.csv", line: 3 })).toBe("a.csv line 3");
    expect(describeLocation({ path: '$.dataSets[0].series["0:1"]', field: "OBS_STATUS" })).toBe('$.dataSets[0].series["0:1"] (field OBS_STATUS)');
    expect(describeLocation({ field: "map" })).toBe("field map");
    expect(describeLocation({})).toBe("");
  });

  it("serialises to plain data for logs and manifests", () => {
    const e = new IngestError("PERIOD_INVALID", "sdmx-json", { path: "$.x" }, "month 13", "2019-13");
    expect(JSON.parse(JSON.stringify(e))).toEqual({ code: "PERIOD_INVALID", source: "sdmx-json", location: { path: "$.x" }, message: "$.x: month 13", value: "2019-13" });
  });
});

describe("error codes", () => {
  it("is a fixed list without repeats that includes the codes the issue names", () => {
    expect(new Set(INGEST_ERROR_CODES).size).toBe(INGEST_ERROR_CODES.length);
    for (const c of ["JSON_SYNTAX", "JSON_TRUNCATED", "SDMX_MISSING_STRUCTURE", "SDMX_MISSING_DIMENSION", "SDMX_KEY_LENGTH_MISMATCH", "SDMX_INDEX_OUT_OF_RANGE", "CSV_MISSING_COLUMN", "CSV_COLUMN_COUNT_MISMATCH", "CSV_NON_NUMERIC_VALUE", "VALUE_NOT_FINITE", "VALUE_NEGATIVE", "PERIOD_UNKNOWN_FORMAT", "DUPLICATE_OBSERVATION", "EMPTY_PAYLOAD", "ENCODING_INVALID", "JSONSTAT_SIZE_MISMATCH", "WORLDBANK_API_ERROR"]) {
      expect(isIngestErrorCode(c), c).toBe(true);
    }
    expect(isIngestErrorCode("SOMETHING_ELSE")).toBe(false);
  });
});

describe("IssueCollector", () => {
  const err = () => new IngestError("VALUE_NEGATIVE", "csv", { line: 2 }, "-1 is negative");
  it("throws in strict mode", () => {
    expect(() => new IssueCollector("strict").report(err())).toThrow(IngestError);
  });
  it("keeps maxIssues and counts them all in collect mode", () => {
    const c = new IssueCollector("collect", 2);
    for (let i = 0; i < 5; i++) c.report(err());
    expect(c.issues).toHaveLength(2);
    expect(c.count).toBe(5);
  });
});

describe("jsonPath", () => {
  it("writes identifiers with dots, indexes in brackets, other keys quoted", () => {
    // the location style of lib/ingestion/types.ts SourceLocation.path
    expect(jsonPath(["data", "dataSets", 0, "series", "0:1", "observations", "3"])).toBe('$.data.dataSets[0].series["0:1"].observations["3"]');
    expect(jsonPath([])).toBe("$");
  });
});
