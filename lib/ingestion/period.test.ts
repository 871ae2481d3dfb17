// SDMX reporting periods: forms of SDMX 2.1 SDMXCommon.xsd ObservationalTimePeriodType.
import { describe, expect, it } from "vitest";
import { isoWeeksInYear, parsePeriod } from "./period";

describe("parsePeriod: the SDMX 2.1 forms", () => {
  it.each([
    // [text, canonical, frequency, start, end]
    ["2019", "2019", "A", "2019-01-01", "2019-12-31"], // xs:gYear
    ["2019-A1", "2019", "A", "2019-01-01", "2019-12-31"], // ReportingYearType, start day January 1 assumed
    ["2019-S2", "2019-S2", "S", "2019-07-01", "2019-12-31"], // ReportingSemesterType (P6M)
    ["2019-T2", "2019-T2", "T", "2019-05-01", "2019-08-31"], // ReportingTrimesterType (P4M)
    ["2019-Q3", "2019-Q3", "Q", "2019-07-01", "2019-09-30"], // ReportingQuarterType (P3M)
    ["2019-07", "2019-07", "M", "2019-07-01", "2019-07-31"], // xs:gYearMonth
    ["2019-M07", "2019-07", "M", "2019-07-01", "2019-07-31"], // ReportingMonthType
    ["2020-02", "2020-02", "M", "2020-02-01", "2020-02-29"], // leap February
    ["2019-01-18", "2019-01-18", "D", "2019-01-18", "2019-01-18"], // xs:date
    ["2019-D018", "2019-01-18", "D", "2019-01-18", "2019-01-18"], // ReportingDayType, day 18 of the year
    ["2020-D366", "2020-12-31", "D", "2020-12-31", "2020-12-31"], // 366 days in a leap year
    ["2019-Q1+01:00", "2019-Q1", "Q", "2019-01-01", "2019-03-31"], // optional time zone
    ["2013-01-18T10:00:00Z", "2013-01-18T10:00:00Z", "DT", "2013-01-18", "2013-01-18"], // xs:dateTime
    ["2019-04-01/P3M", "2019-04-01/P3M", "R", "2019-04-01", "2019-06-30"], // TimeRangeType
  ])("%s -> %s", (text, canonical, frequency, start, end) => {
    expect(parsePeriod(text)).toEqual({ canonical, frequency, start, end });
  });
});

describe("parsePeriod: ISO 8601 weeks (ReportingWeekType)", () => {
  it("week 1 is the week with the year's first Thursday", () => {
    // ISO 8601: 2019-W01 runs Monday 31 December 2018 to Sunday 6 January 2019
    expect(parsePeriod("2019-W01")).toEqual({ canonical: "2019-W01", frequency: "W", start: "2018-12-31", end: "2019-01-06" });
    // ISO 8601: 2019-W05 starts Monday 28 January 2019
    expect(parsePeriod("2019-W05")).toMatchObject({ start: "2019-01-28", end: "2019-02-03" });
  });
  it("knows which years have 53 weeks", () => {
    // ISO 8601: a year has 53 weeks when it starts on a Thursday, or is a leap year starting on a Wednesday
    expect(isoWeeksInYear(2020)).toBe(53); // 1 January 2020 was a Wednesday (leap year)
    expect(isoWeeksInYear(2015)).toBe(53); // 1 January 2015 was a Thursday
    expect(isoWeeksInYear(2019)).toBe(52);
    expect(parsePeriod("2020-W53")).toMatchObject({ start: "2020-12-28", end: "2021-01-03" });
    expect(parsePeriod("2019-W53")).toMatchObject({ problem: "PERIOD_INVALID" });
  });
});

describe("parsePeriod: problems", () => {
  it.each([
    ["2019-13", "PERIOD_INVALID"],
    ["2019-Q5", "PERIOD_INVALID"],
    ["2019-S3", "PERIOD_INVALID"],
    ["2019-A2", "PERIOD_INVALID"],
    ["2019-02-29", "PERIOD_INVALID"], // 2019 is not a leap year
    ["2019-D366", "PERIOD_INVALID"],
    ["2019/07", "PERIOD_UNKNOWN_FORMAT"],
    ["2019-M7", "PERIOD_UNKNOWN_FORMAT"], // the schema wants two digits: 2019-M07
    ["19", "PERIOD_UNKNOWN_FORMAT"],
    ["", "PERIOD_UNKNOWN_FORMAT"],
    ["2019Q3", "PERIOD_UNKNOWN_FORMAT"], // compact form: only with lenient
  ])("%s -> %s", (text, problem) => {
    expect(parsePeriod(text)).toMatchObject({ problem });
  });

  it("reads compact agency forms only when lenient", () => {
    // World Bank API dates such as 2019Q3 and 2019M07
    expect(parsePeriod("2019Q3", { lenient: true })).toMatchObject({ canonical: "2019-Q3" });
    expect(parsePeriod("2019M07", { lenient: true })).toMatchObject({ canonical: "2019-07" });
    expect(parsePeriod("2019M7", { lenient: true })).toMatchObject({ problem: "PERIOD_UNKNOWN_FORMAT" });
  });
});
