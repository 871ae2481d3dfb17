import { describe, expect, it } from "vitest";
import { alpha2ToAlpha3, classifyEconomyCode, isIsoAlpha3, isUserAssignedCode } from "./economies";

describe("economy codes (ISO 3166-1)", () => {
  it("accepts assigned alpha-3 codes with their English names", () => {
    // ISO 3166-1: DEU Germany, JPN Japan
    expect(classifyEconomyCode("DEU")).toEqual({ code: "DEU", kind: "ECONOMY", isoName: "Germany" });
    expect(isIsoAlpha3("JPN")).toBe(true);
    expect(isIsoAlpha3("jpn")).toBe(false);
  });

  it("keeps publisher aggregates apart", () => {
    // World Bank WDI aggregates (vintage 2026-04-01 files): WLD World, OED OECD members, EUU European Union, HIC High income
    for (const code of ["WLD", "OED", "EUU", "HIC", "LMY"]) {
      expect(classifyEconomyCode(code).kind).toBe("AGGREGATE");
    }
  });

  it("treats the user-assigned range as economies only when declared", () => {
    // ISO 3166-1 section 6.2: AAA-AAZ, QMA-QZZ, XAA-XZZ, ZZA-ZZZ are user-assigned
    expect(isUserAssignedCode("XAA")).toBe(true);
    expect(isUserAssignedCode("QMA")).toBe(true);
    expect(isUserAssignedCode("QLZ")).toBe(false);
    expect(isUserAssignedCode("ZZB")).toBe(true);
    expect(classifyEconomyCode("XAB").kind).toBe("AGGREGATE");
    expect(classifyEconomyCode("XAB", { declaredEconomy: true }).kind).toBe("ECONOMY");
    // XKX: the code the World Bank and the EU use for Kosovo (common practice)
    expect(classifyEconomyCode("XKX")).toEqual({ code: "XKX", kind: "ECONOMY", isoName: "Kosovo" });
  });

  it("rejects malformed codes naming the code", () => {
    expect(() => classifyEconomyCode("De")).toThrow(/"De" is not three upper-case letters/);
  });

  it("maps alpha-2 to alpha-3 including Eurostat's EL and UK", () => {
    // Eurostat country codes use EL for Greece and UK for the United Kingdom (Eurostat glossary)
    expect(alpha2ToAlpha3("DE")).toBe("DEU");
    expect(alpha2ToAlpha3("EL")).toBe("GRC");
    expect(alpha2ToAlpha3("UK")).toBe("GBR");
    expect(alpha2ToAlpha3("QQ")).toBeNull();
  });
});
