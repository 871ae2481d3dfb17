/**
 * One release in: parse every payload, map it to economies, concepts and units, and only when the
 * whole release is clean, commit it as one vintage. The demo workspace, `ideafront import` and the
 * scheduled fetch all come through here, so they behave the same.
 */
import type { Store } from "../store/db";
import { commitRelease, type CommitResult } from "../store/vintages";
import { parsePayloadStream } from "../ingestion/parse";
import type { PayloadFormat, PayloadInput } from "../ingestion/common";
import { IngestError } from "../ingestion/errors";
import { ObservationMapper } from "../ingestion/mapping";
import type { SourceDefinition, SourceQuery } from "../ingestion/sources";
import { canonicalRelease, ReleaseError } from "../ingestion/release";
import type { MappedObservation, SourceLocation } from "../ingestion/types";

export interface ReleasePayload {
  /** Bytes (or text) of one response or file. */
  body: PayloadInput;
  /** File name or URL, for error locations. */
  name: string;
  /** The query this payload answers, when it answers one. */
  query?: SourceQuery;
  /** Override of the definition's format (a file source may take several). */
  format?: PayloadFormat;
  /** Extra parser options (column mapping of a plain CSV file, decimal comma...). */
  parserOptions?: Record<string, unknown>;
}

export interface ImportProblem {
  payload: string;
  code: string;
  /** The problem, naming its place (file line and column, or JSON path) when it has one. */
  message: string;
  /** Where the parser found it, when it says. */
  location?: SourceLocation;
}

/** "file: message [CODE]", without repeating the file when the message already starts with it. */
function describeProblem(p: ImportProblem): string {
  return `${p.message.startsWith(p.payload) ? "" : `${p.payload}: `}${p.message} [${p.code}]`;
}

/** A release that cannot be stored: every problem found, nothing written. */
export class ImportError extends Error {
  readonly problems: ImportProblem[];
  constructor(problems: ImportProblem[]) {
    const head = problems.slice(0, 5).map(describeProblem);
    const more = problems.length > 5 ? `\n... and ${problems.length - 5} more problems` : "";
    super(
      problems.length === 1
        ? `The release was not stored: ${head[0]}`
        : `The release was not stored (${problems.length} problems):\n${head.join("\n")}${more}`,
    );
    this.name = "ImportError";
    this.problems = problems;
  }
}

export interface PreparedRelease {
  /**
   * The whole release in canonical order (validated, sorted by economy, concept, unit, period;
   * explicitly missing values left out), ready for commitRelease.
   */
  observations: MappedObservation[];
  /** The publisher's own stamp from the payloads (newest prepared/updated), when given. */
  releasedAt: Date | null;
  notes: string[];
  counts: { parsed: number; unmatched: number; skipped: number };
}

/**
 * Parse and map all payloads of a release. Throws ImportError listing every problem (collect mode)
 * when any payload has one; pure apart from reading the payload streams.
 * Each observation is mapped as soon as it is parsed, so only mapped observations are held, never
 * the parsed ones of a whole payload.
 */
export async function prepareRelease(
  def: SourceDefinition,
  payloads: readonly ReleasePayload[],
  opts: { nonNegativeConcepts?: boolean; skipUnknownEconomies?: boolean } = {},
): Promise<PreparedRelease> {
  const problems: ImportProblem[] = [];
  const observations: MappedObservation[] = [];
  const notes: string[] = [];
  const counts = { parsed: 0, unmatched: 0, skipped: 0 };
  const checkSign = opts.nonNegativeConcepts !== false;
  let releasedAt: Date | null = null;
  for (const p of payloads) {
    const format = p.format ?? def.format;
    const mapper = new ObservationMapper(def, p.query, { skipUnknownEconomies: opts.skipUnknownEconomies });
    const negative: ImportProblem[] = [];
    let parsed;
    try {
      parsed = await parsePayloadStream(format, p.body, { mode: "collect", file: p.name, ...(p.parserOptions ?? {}) }, (raw) => {
        const o = mapper.add(raw);
        if (!o) return;
        if (checkSign && o.value !== null && o.value < 0 && NON_NEGATIVE.has(o.concept)) {
          negative.push({
            payload: p.name,
            code: "VALUE_NEGATIVE",
            message: `${o.economy} ${o.concept} ${o.period}: ${o.value} is negative, but the concept is a count or level`,
            ...(raw.location ? { location: raw.location } : {}),
          });
        }
        observations.push(o);
      });
    } catch (err) {
      if (err instanceof IngestError) {
        problems.push({ payload: p.name, code: err.code, message: err.message, location: err.location });
        continue;
      }
      throw err;
    }
    for (const issue of parsed.issues) problems.push({ payload: p.name, code: issue.code, message: issue.message, location: issue.location });
    if (parsed.counts.issues > parsed.issues.length) {
      problems.push({ payload: p.name, code: "MORE_ISSUES", message: `${parsed.counts.issues - parsed.issues.length} further problems not listed` });
    }
    counts.parsed += parsed.counts.observations;
    counts.skipped += parsed.counts.skipped;
    for (const n of parsed.meta.notes) notes.push(`${p.name}: ${n}`);
    if (parsed.meta.deletions.length) notes.push(`${p.name}: ${parsed.meta.deletions.length} deletion instructions ignored (a vintage is the whole release)`);
    const stamp = parsed.meta.prepared ?? parsed.meta.datasets.find((d) => d.updated)?.updated;
    if (stamp) {
      const d = new Date(stamp);
      if (!Number.isNaN(d.getTime()) && (!releasedAt || d > releasedAt)) releasedAt = d;
    }
    const mapped = mapper.finish();
    counts.unmatched += mapped.unmatched;
    const skippedCodes = Object.entries(mapped.skippedEconomies);
    if (skippedCodes.length) {
      notes.push(`${p.name}: left out ${skippedCodes.reduce((n, [, c]) => n + c, 0)} observations of codes without an ISO 3166-1 alpha-3 equivalent (${skippedCodes.map(([c, n]) => `${c} ${n}`).join(", ")})`);
    }
    for (const i of mapped.issues) problems.push({ payload: p.name, code: i.code, message: i.message });
    for (const n of negative) problems.push(n);
  }
  if (counts.unmatched) notes.push(`${counts.unmatched} observations matched none of the source's queries and were left out`);
  let canonical: MappedObservation[] = [];
  try {
    canonical = canonicalRelease(observations);
  } catch (err) {
    if (err instanceof ReleaseError) problems.push({ payload: payloads.map((p) => p.name).join(", "), code: err.code, message: err.message });
    else throw err;
  }
  if (problems.length) throw new ImportError(problems);
  return { observations: canonical, releasedAt, notes, counts };
}

/** Concepts whose values cannot be negative (counts and levels). */
const NON_NEGATIVE = new Set<string>(["researchers_fte", "researchers_per_million", "researchers_per_thousand_employed", "researchers_headcount", "population", "employment", "hours", "human_capital", "gdp_real", "capital_services", "tfp_index", "patents", "rd_share_gdp"]);

export interface ImportReleaseInput {
  def: SourceDefinition;
  label: string;
  payloads: readonly ReleasePayload[];
  economyNames?: Readonly<Record<string, string>>;
  declaredEconomies?: readonly string[];
  isDemo?: boolean;
  releasedAt?: Date | null;
  fetchedAt?: Date;
  /** Leave out codes without an ISO alpha-3 equivalent (publisher aggregates such as "EU28"), noting them. */
  skipUnknownEconomies?: boolean;
  /**
   * Called once the whole release has parsed and validated, before anything is written (e.g. to
   * create the source of a first import, so that a refused file leaves no trace).
   */
  beforeCommit?: (prepared: PreparedRelease) => Promise<void>;
}

/** Parse, map, validate and commit one release. Nothing is written unless all of it is clean. */
export async function importRelease(store: Store, input: ImportReleaseInput): Promise<CommitResult & { prepared: PreparedRelease }> {
  const prepared = await prepareRelease(input.def, input.payloads, { skipUnknownEconomies: input.skipUnknownEconomies });
  await input.beforeCommit?.(prepared);
  const result = await commitRelease(store, {
    source: input.def.name,
    label: input.label,
    releasedAt: input.releasedAt ?? prepared.releasedAt,
    observations: prepared.observations,
    economyNames: input.economyNames,
    declaredEconomies: input.declaredEconomies,
    notes: prepared.notes,
    isDemo: input.isDemo,
    fetchedAt: input.fetchedAt,
  });
  return { ...result, prepared };
}
