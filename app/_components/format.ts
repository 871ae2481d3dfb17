/** Number formats shared by server and client components. */

/** A growth rate as a percentage: 0.0081 -> "0.81%"; null -> "–". */
export function pct(x: number | null | undefined, digits = 2): string {
  return x === null || x === undefined || !Number.isFinite(x) ? "–" : `${(x * 100).toFixed(digits)}%`;
}

/** A change in percentage points: 0.0021 -> "+0.21 pp". */
export function pp(x: number | null | undefined, digits = 2): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return "–";
  const v = (x * 100).toFixed(digits);
  return `${x >= 0 ? "+" : ""}${v} pp`;
}

/** An interval of growth rates; open ends are shown as unbounded. */
export function interval(lo: number | null | undefined, hi: number | null | undefined, digits = 2): string {
  const l = lo === null || lo === undefined ? "−∞" : pct(lo, digits);
  const h = hi === null || hi === undefined ? "+∞" : pct(hi, digits);
  return `[${l}, ${h}]`;
}

export function num(x: number | null | undefined, digits = 2): string {
  return x === null || x === undefined || !Number.isFinite(x) ? "–" : x.toFixed(digits);
}

const REGIME_WORDS: Record<string, string> = {
  converging: "converging",
  "knife-edge": "knife-edge",
  explosive: "explosive",
  "no-estimate": "no estimate",
  "not-identified": "not identified",
};
export function regimeLabel(r: string | null | undefined): string {
  return r ? (REGIME_WORDS[r] ?? r) : "–";
}
