/**
 * Economy codes: ISO 3166-1 alpha-3, checked against the maintained list in the
 * i18n-iso-countries package. Codes outside the standard's assigned set are either user-assigned
 * (ISO 3166-1 reserves AAA-AAZ, QMA-QZZ, XAA-XZZ and ZZA-ZZZ for users; our invented demo
 * economies live in XAA-XZZ, and XKX is the code the World Bank and the EU use for Kosovo) or
 * publisher aggregates (regions, income groups such as WLD, OED, EUU, HIC), which are kept apart
 * from economies.
 */
import countries from "i18n-iso-countries";
import en from "i18n-iso-countries/langs/en.json" with { type: "json" };

countries.registerLocale(en as Parameters<typeof countries.registerLocale>[0]);

export type EconomyKind = "ECONOMY" | "AGGREGATE";

/** Codes in the user-assigned ranges that publishers use for real economies (common practice). */
const USER_ASSIGNED_ECONOMIES: Readonly<Record<string, string>> = { XKX: "Kosovo" };

/** True for codes ISO 3166-1 reserves for users: AAA-AAZ, QMA-QZZ, XAA-XZZ, ZZA-ZZZ. */
export function isUserAssignedCode(code: string): boolean {
  if (!/^[A-Z]{3}$/.test(code)) return false;
  return code.startsWith("AA") || code.startsWith("X") || code.startsWith("ZZ") || (code[0] === "Q" && code[1]! >= "M");
}

/** True when `code` is an officially assigned ISO 3166-1 alpha-3 code. */
export function isIsoAlpha3(code: string): boolean {
  return /^[A-Z]{3}$/.test(code) && countries.isValid(code);
}

export interface EconomyClass {
  code: string;
  kind: EconomyKind;
  /** English short name for ISO codes, else null (the publisher's own name is used). */
  isoName: string | null;
}

/**
 * Classify a three-letter code.
 * - ISO 3166-1 alpha-3 assigned: an economy.
 * - User-assigned and declared as an economy by the caller (invented demo economies, XKX): an economy.
 * - Anything else of three letters or digits: a publisher aggregate.
 * Throws RangeError when the code is not three upper-case letters or digits.
 * Example: classifyEconomyCode("DEU") -> { code: "DEU", kind: "ECONOMY", isoName: "Germany" };
 * classifyEconomyCode("WLD") -> { code: "WLD", kind: "AGGREGATE", isoName: null }.
 * Reference: ISO 3166-1:2020, section 6.2 (user-assigned code elements).
 */
export function classifyEconomyCode(code: string, opts: { declaredEconomy?: boolean } = {}): EconomyClass {
  if (!/^[A-Z0-9]{3}$/.test(code)) {
    throw new RangeError(`economy code "${code}" is not three upper-case letters (ISO 3166-1 alpha-3)`);
  }
  if (isIsoAlpha3(code)) return { code, kind: "ECONOMY", isoName: countries.getName(code, "en") ?? null };
  if (USER_ASSIGNED_ECONOMIES[code]) return { code, kind: "ECONOMY", isoName: USER_ASSIGNED_ECONOMIES[code]! };
  if (opts.declaredEconomy && isUserAssignedCode(code)) return { code, kind: "ECONOMY", isoName: null };
  return { code, kind: "AGGREGATE", isoName: null };
}

/** ISO 3166-1 alpha-2 to alpha-3 ("DE" -> "DEU"); Eurostat's "EL" and "UK" are mapped too. Null if unknown. */
export function alpha2ToAlpha3(code: string): string | null {
  const fixed: Record<string, string> = { EL: "GRC", UK: "GBR" };
  return fixed[code] ?? countries.alpha2ToAlpha3(code) ?? null;
}
