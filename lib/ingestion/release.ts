/**
 * A release as the store receives it: validated, in canonical order, with a content hash that
 * does not depend on the order in which the publisher listed the observations.
 */
import { createHash } from "node:crypto";
import { CONCEPTS, type Concept, type MappedObservation } from "./types";

export class ReleaseError extends Error {
  readonly code: "RELEASE_DUPLICATE_OBSERVATION" | "RELEASE_INVALID_OBSERVATION" | "RELEASE_EMPTY";
  readonly index?: number;
  constructor(code: ReleaseError["code"], message: string, index?: number) {
    super(message);
    this.name = "ReleaseError";
    this.code = code;
    this.index = index;
  }
}

const conceptSet = new Set<string>(CONCEPTS);
const PERIOD = /^\d{4}(-(A1|[QSTMWD]?\d{1,3}|\d{2}-\d{2}))?$/;

/** Calendar year of an SDMX reporting period ("2019", "2019-Q3", "2019-07-01" -> 2019). */
export function periodYear(period: string): number {
  return Number(period.slice(0, 4));
}

/** Stable key of one observation slot: economy, concept, unit, period. */
export function slotKey(o: Pick<MappedObservation, "economy" | "concept" | "unit" | "period">): string {
  return `${o.economy}\u0000${o.concept}\u0000${o.unit}\u0000${o.period}`;
}

/**
 * Validate a whole release and return it sorted by economy, concept, unit, period, with explicitly
 * missing values (null) removed: a period published without a value is a period without data.
 * Throws ReleaseError naming the first bad observation (its index in the input).
 */
export function canonicalRelease(observations: readonly MappedObservation[]): MappedObservation[] {
  const kept: MappedObservation[] = [];
  observations.forEach((o, i) => {
    const where = `observation ${i + 1} (${o.economy} ${o.concept} ${o.period})`;
    if (!/^[A-Z0-9]{3}$/.test(o.economy)) throw new ReleaseError("RELEASE_INVALID_OBSERVATION", `${where}: economy code "${o.economy}" is not three upper-case letters`, i);
    if (!conceptSet.has(o.concept)) throw new ReleaseError("RELEASE_INVALID_OBSERVATION", `${where}: unknown concept "${o.concept}"`, i);
    if (!o.unit) throw new ReleaseError("RELEASE_INVALID_OBSERVATION", `${where}: unit is empty`, i);
    if (!PERIOD.test(o.period)) throw new ReleaseError("RELEASE_INVALID_OBSERVATION", `${where}: period "${o.period}" is not an SDMX reporting period`, i);
    if (o.value !== null && !Number.isFinite(o.value)) throw new ReleaseError("RELEASE_INVALID_OBSERVATION", `${where}: value ${o.value} is not a finite number`, i);
    if (o.value !== null) kept.push(o);
  });
  kept.sort(compareSlots);
  for (let i = 1; i < kept.length; i++) {
    if (compareSlots(kept[i - 1]!, kept[i]!) === 0) {
      const o = kept[i]!;
      throw new ReleaseError(
        "RELEASE_DUPLICATE_OBSERVATION",
        `the release lists ${o.economy} ${o.concept} (${o.unit}) for period ${o.period} twice`,
      );
    }
  }
  return kept;
}

function compareSlots(a: MappedObservation, b: MappedObservation): number {
  return cmp(a.economy, b.economy) || cmp(a.concept, b.concept) || cmp(a.unit, b.unit) || cmp(a.period, b.period);
}
function cmp(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/** sha256 of a canonical release: same data in any order gives the same hash. */
export function releaseContentHash(canonical: readonly MappedObservation[]): string {
  const h = createHash("sha256");
  let chunk = "";
  for (const o of canonical) {
    // Values are hashed by their shortest round-trip decimal form, so 1.10 and 1.1 agree.
    chunk += `${o.economy}\t${o.concept}\t${o.unit}\t${o.period}\t${o.value}\t${o.status ?? ""}\n`;
    if (chunk.length > 1 << 16) {
      h.update(chunk);
      chunk = "";
    }
  }
  h.update(chunk);
  return h.digest("hex");
}

export function isConcept(x: string): x is Concept {
  return conceptSet.has(x);
}
