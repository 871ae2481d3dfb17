/**
 * The vintage store. One vintage per release of a source; a value is stored only when it is new
 * or differs from the source's previous state, and a removal marker is stored when a period
 * disappears. Reading "as of" vintage v takes, for each series and period, the newest row whose
 * vintage seq is <= v's seq. A release is committed in one transaction: all of it or nothing.
 */
import { canonicalRelease, releaseContentHash } from "../ingestion/release";
import type { Concept, MappedObservation } from "../ingestion/types";
import { classifyEconomyCode } from "../economies";
import { AppError } from "../errors";
import type { SqlConnection, Store } from "./db";

export interface SourceInput {
  name: string;
  title: string;
  kind: string;
  format: string;
  config: unknown;
  enabled?: boolean;
  schedule?: string;
  timezone?: string;
  isDemo?: boolean;
}

/** Create the source, or update its definition when it exists. Returns its id. */
export async function upsertSource(store: Store, s: SourceInput): Promise<number> {
  const row = await store.prisma.source.upsert({
    where: { name: s.name },
    create: {
      name: s.name,
      title: s.title,
      kind: s.kind,
      format: s.format,
      config: s.config as object,
      enabled: s.enabled ?? false,
      schedule: s.schedule ?? "0 6 * * *",
      timezone: s.timezone ?? "UTC",
      isDemo: s.isDemo ?? false,
    },
    update: { title: s.title, kind: s.kind, format: s.format, config: s.config as object, isDemo: s.isDemo ?? false },
  });
  return row.id;
}

export interface ReleaseInput {
  /** Name of an existing source. */
  source: string;
  /** Label of the release, usually its date ("2026-04-01"). Unique per source. */
  label: string;
  /** The publisher's own published/updated stamp, when given. */
  releasedAt?: Date | null;
  observations: readonly MappedObservation[];
  /** Publisher names of economies, used when an economy is first seen. */
  economyNames?: Readonly<Record<string, string>>;
  /** Codes in ISO's user-assigned range that the source declares to be economies (demo economies). */
  declaredEconomies?: readonly string[];
  /** Import warnings to keep with the vintage (skipped records, derivations...). */
  notes?: readonly string[];
  isDemo?: boolean;
  /** When fetched (defaults to now). */
  fetchedAt?: Date;
}

export interface ReleaseCounts {
  observations: number;
  added: number;
  revised: number;
  removed: number;
  unchanged: number;
}

export interface CommitResult {
  status: "created" | "unchanged";
  vintage: { id: number; seq: number; label: string };
  counts: ReleaseCounts;
  warnings: string[];
}

/** Rows per INSERT ... SELECT FROM unnest(...) statement. */
const CHUNK = 10_000;

/**
 * Commit a whole release as a new vintage of its source.
 * - A release whose content equals the source's latest vintage creates nothing ("unchanged").
 * - A label already used by the source with other content is a CONFLICT.
 * - Invalid or duplicate observations throw before anything is written.
 *
 * How the comparison with the source's current state is made: the first release of a source is
 * inserted as it stands (every value is added). A later release is first copied into a temporary
 * table of the transaction, and one statement compares it with the current state (the newest row
 * per series and period) and inserts the new and changed values and the removal markers, so the
 * current state never travels to this process and memory does not grow with the size of the store.
 */
export async function commitRelease(store: Store, input: ReleaseInput): Promise<CommitResult> {
  const canonical = canonicalRelease(input.observations);
  const hash = releaseContentHash(canonical);
  const declared = new Set(input.declaredEconomies ?? []);

  return store.transaction(async (tx) => {
    const src = await tx.query<{ id: number }>(`SELECT id FROM source WHERE name = $1 FOR UPDATE`, [input.source]);
    if (!src.rows[0]) throw new AppError("NOT_FOUND", `No source named "${input.source}".`, { field: "source" });
    const sourceId = src.rows[0].id;

    const latest = await tx.query<{ id: number; seq: number; label: string; content_hash: string }>(
      `SELECT id, seq, label, content_hash FROM vintage WHERE source_id = $1 ORDER BY seq DESC LIMIT 1`,
      [sourceId],
    );
    const prev = latest.rows[0];
    if (prev && prev.content_hash === hash) {
      return {
        status: "unchanged",
        vintage: { id: prev.id, seq: prev.seq, label: prev.label },
        counts: { observations: canonical.length, added: 0, revised: 0, removed: 0, unchanged: canonical.length },
        warnings: [],
      } satisfies CommitResult;
    }
    const sameLabel = await tx.query(`SELECT 1 FROM vintage WHERE source_id = $1 AND label = $2`, [sourceId, input.label]);
    if (sameLabel.rows.length) {
      throw new AppError("CONFLICT", `Source "${input.source}" already has a vintage labelled "${input.label}" with other content.`, {
        field: "vintage",
      });
    }
    if (prev && isIsoDate(prev.label) && isIsoDate(input.label) && input.label < prev.label) {
      throw new AppError(
        "CONFLICT",
        `Releases of "${input.source}" must arrive in order: "${input.label}" is older than the latest vintage "${prev.label}".`,
        { field: "vintage" },
      );
    }

    const warnings: string[] = [];
    await upsertEconomies(tx, canonical, input.economyNames ?? {}, declared, input.isDemo ?? false);
    const seriesIds = await upsertSeries(tx, sourceId, canonical, warnings);

    const seq = (prev?.seq ?? 0) + 1;
    const notes = [...(input.notes ?? []), ...warnings];
    const v = await tx.query<{ id: number }>(
      `INSERT INTO vintage (source_id, seq, label, released_at, fetched_at, content_hash, observation_count, notes, is_demo)
       VALUES ($1, $2, $3, $4, $5, $6, $7, $8::jsonb, $9) RETURNING id`,
      [sourceId, seq, input.label, input.releasedAt ?? null, input.fetchedAt ?? new Date(), hash, canonical.length, JSON.stringify(notes), input.isDemo ?? false],
    );
    const vintageId = v.rows[0]!.id;

    const hasState = await tx.query<{ x: boolean }>(
      `SELECT EXISTS (SELECT 1 FROM observation o JOIN series s ON s.id = o.series_id WHERE s.source_id = $1) AS x`,
      [sourceId],
    );
    const counts: ReleaseCounts = { observations: canonical.length, added: 0, revised: 0, removed: 0, unchanged: 0 };
    if (!hasState.rows[0]!.x) {
      // Nothing stored yet for this source: every value is added.
      await insertInChunks(
        tx,
        `INSERT INTO observation (series_id, vintage_id, vintage_seq, period, year, value, status, removed)
         SELECT s, $5::int, $6::int, p, substr(p, 1, 4)::int, v, st, false
           FROM unnest($1::int[], $2::text[], $3::float8[], $4::text[]) AS t(s, p, v, st)`,
        canonical,
        seriesIds,
        [vintageId, seq],
      );
      counts.added = canonical.length;
    } else {
      await tx.exec(`CREATE TEMP TABLE release_stage (series_id int NOT NULL, period text NOT NULL, value float8 NOT NULL, status text) ON COMMIT DROP`);
      await insertInChunks(
        tx,
        `INSERT INTO release_stage (series_id, period, value, status) SELECT * FROM unnest($1::int[], $2::text[], $3::float8[], $4::text[])`,
        canonical,
        seriesIds,
        [],
      );
      await tx.exec(`ANALYZE release_stage`);
      // Current state: the newest row per (series, period) of the source. A staged value is added
      // when the slot is empty or removed, revised when value or status differ; a current value
      // missing from the release gets a removal marker.
      const diff = await tx.query<{ added: number; revised: number; removed: number }>(
        `WITH cur AS (
           SELECT DISTINCT ON (o.series_id, o.period) o.series_id, o.period, o.value, o.status, o.removed
             FROM observation o JOIN series s ON s.id = o.series_id
            WHERE s.source_id = $1
            ORDER BY o.series_id, o.period, o.vintage_seq DESC
         ), diff AS (
           SELECT COALESCE(n.series_id, c.series_id) AS series_id, COALESCE(n.period, c.period) AS period,
                  n.value, n.status, n.series_id IS NULL AS removed, (c.series_id IS NULL OR c.removed) AS is_new
             FROM release_stage n FULL JOIN cur c ON c.series_id = n.series_id AND c.period = n.period
            WHERE CASE WHEN n.series_id IS NULL THEN NOT c.removed
                       ELSE c.series_id IS NULL OR c.removed OR c.value IS DISTINCT FROM n.value OR c.status IS DISTINCT FROM n.status END
         ), ins AS (
           INSERT INTO observation (series_id, vintage_id, vintage_seq, period, year, value, status, removed)
           SELECT series_id, $2::int, $3::int, period, substr(period, 1, 4)::int, value, status, removed FROM diff
         )
         SELECT count(*) FILTER (WHERE NOT removed AND is_new)::int AS added,
                count(*) FILTER (WHERE NOT removed AND NOT is_new)::int AS revised,
                count(*) FILTER (WHERE removed)::int AS removed
           FROM diff`,
        [sourceId, vintageId, seq],
      );
      const d = diff.rows[0]!;
      counts.added = d.added;
      counts.revised = d.revised;
      counts.removed = d.removed;
    }
    counts.unchanged = canonical.length - counts.added - counts.revised;
    await tx.query(`UPDATE vintage SET added_count = $2, revised_count = $3, removed_count = $4 WHERE id = $1`, [
      vintageId,
      counts.added,
      counts.revised,
      counts.removed,
    ]);
    return { status: "created", vintage: { id: vintageId, seq, label: input.label }, counts, warnings } satisfies CommitResult;
  });
}

/**
 * Run `sql` once per CHUNK observations with the parameters $1 series ids, $2 periods, $3 values,
 * $4 statuses, followed by `extra` ($5, ...). Observations are in canonical order, so the series
 * id is looked up once per run of one series.
 */
async function insertInChunks(
  tx: SqlConnection,
  sql: string,
  canonical: readonly MappedObservation[],
  seriesIds: ReadonlyMap<string, number>,
  extra: readonly unknown[],
): Promise<void> {
  let last: MappedObservation | null = null;
  let lastId = 0;
  for (let i = 0; i < canonical.length; i += CHUNK) {
    const n = Math.min(CHUNK, canonical.length - i);
    const ids = new Array<number>(n);
    const periods = new Array<string>(n);
    const values = new Array<number | null>(n);
    const statuses = new Array<string | null>(n);
    for (let j = 0; j < n; j++) {
      const o = canonical[i + j]!;
      if (!last || o.economy !== last.economy || o.concept !== last.concept || o.unit !== last.unit) {
        lastId = seriesIds.get(seriesKeyOf(o))!;
        last = o;
      }
      ids[j] = lastId;
      periods[j] = o.period;
      values[j] = o.value;
      statuses[j] = o.status ?? null;
    }
    await tx.query(sql, [ids, periods, values, statuses, ...extra]);
  }
}

function seriesKeyOf(o: Pick<MappedObservation, "economy" | "concept" | "unit">): string {
  return `${o.economy}|${o.concept}|${o.unit}`;
}

function isIsoDate(s: string): boolean {
  return /^\d{4}-\d{2}-\d{2}$/.test(s);
}

async function upsertEconomies(
  tx: SqlConnection,
  canonical: readonly MappedObservation[],
  names: Readonly<Record<string, string>>,
  declared: ReadonlySet<string>,
  isDemo: boolean,
): Promise<void> {
  const codes: string[] = [];
  for (const o of canonical) if (codes[codes.length - 1] !== o.economy) codes.push(o.economy); // canonical order: by economy first
  if (!codes.length) return;
  const classes = codes.map((c) => classifyEconomyCode(c, { declaredEconomy: declared.has(c) }));
  await tx.query(
    `INSERT INTO economy (code, name, kind, is_demo, updated_at)
     SELECT c, n, k::"EconomyKind", d, now() FROM unnest($1::text[], $2::text[], $3::text[], $4::bool[]) AS t(c, n, k, d)
     ON CONFLICT (code) DO NOTHING`,
    [
      classes.map((c) => c.code),
      classes.map((c) => names[c.code] ?? c.isoName ?? c.code),
      classes.map((c) => c.kind),
      classes.map((c) => isDemo && declared.has(c.code)),
    ],
  );
}

async function upsertSeries(
  tx: SqlConnection,
  sourceId: number,
  canonical: readonly MappedObservation[],
  warnings: string[],
): Promise<Map<string, number>> {
  // Canonical order groups each series' observations together: one entry per run.
  const list: MappedObservation[] = [];
  for (const o of canonical) {
    const last = list[list.length - 1];
    if (!last || last.economy !== o.economy || last.concept !== o.concept || last.unit !== o.unit) list.push(o);
  }
  if (list.length) {
    await tx.query(
      `INSERT INTO series (source_id, economy_code, concept, unit, series_key)
       SELECT $1::int, e, c, u, k FROM unnest($2::text[], $3::text[], $4::text[], $5::text[]) AS t(e, c, u, k)
       ON CONFLICT (source_id, economy_code, concept, unit) DO NOTHING`,
      [sourceId, list.map((o) => o.economy), list.map((o) => o.concept), list.map((o) => o.unit), list.map((o) => o.seriesKey)],
    );
  }
  const all = await tx.query<{ id: number; economy_code: string; concept: string; unit: string; live: boolean }>(
    `SELECT s.id, s.economy_code, s.concept, s.unit,
            EXISTS (SELECT 1 FROM observation o WHERE o.series_id = s.id) AS live
       FROM series s WHERE s.source_id = $1`,
    [sourceId],
  );
  const ids = new Map<string, number>();
  const unitsByEconomyConcept = new Map<string, string[]>();
  for (const r of all.rows) {
    ids.set(seriesKeyOf({ economy: r.economy_code, concept: r.concept as Concept, unit: r.unit }), r.id);
    if (r.live) {
      const k = `${r.economy_code}|${r.concept}`;
      unitsByEconomyConcept.set(k, [...(unitsByEconomyConcept.get(k) ?? []), r.unit]);
    }
  }
  // A unit or scale change between releases is flagged, never silently mixed: the new unit is a new series.
  const flagged = new Set<string>();
  for (const o of list) {
    const k = `${o.economy}|${o.concept}`;
    const before = (unitsByEconomyConcept.get(k) ?? []).filter((u) => u !== o.unit);
    if (before.length && !flagged.has(k)) {
      flagged.add(k);
      warnings.push(`Unit change for ${o.economy} ${o.concept}: was "${before.join('", "')}", now "${o.unit}"; kept as separate series.`);
    }
  }
  return ids;
}

export interface VintageInfo {
  id: number;
  seq: number;
  label: string;
  releasedAt: Date | null;
  fetchedAt: Date;
  observationCount: number;
  addedCount: number;
  revisedCount: number;
  removedCount: number;
  notes: string[];
}

/** The vintages of a source, oldest first. */
export async function listVintages(store: Store, source: string): Promise<VintageInfo[]> {
  const rows = await store.prisma.vintage.findMany({ where: { source: { name: source } }, orderBy: { seq: "asc" } });
  return rows.map((r) => ({
    id: r.id,
    seq: r.seq,
    label: r.label,
    releasedAt: r.releasedAt,
    fetchedAt: r.fetchedAt,
    observationCount: r.observationCount,
    addedCount: r.addedCount,
    revisedCount: r.revisedCount,
    removedCount: r.removedCount,
    notes: Array.isArray(r.notes) ? (r.notes as string[]) : [],
  }));
}

/** Find a vintage of a source by label, or null. */
export async function findVintage(store: Store, source: string, label: string): Promise<VintageInfo | null> {
  return (await listVintages(store, source)).find((v) => v.label === label) ?? null;
}

export async function getVintageOrThrow(store: Store, source: string, label: string): Promise<VintageInfo> {
  const v = await findVintage(store, source, label);
  if (!v) throw new AppError("NOT_FOUND", `Source "${source}" has no vintage labelled "${label}".`, { field: "vintage" });
  return v;
}

export interface StoredObservation {
  economy: string;
  concept: Concept;
  unit: string;
  period: string;
  year: number;
  value: number;
  status: string | null;
  /** Seq of the vintage that last set this value. */
  setInSeq: number;
}

export interface AsOfQuery {
  source: string;
  /** Vintage seq to read as of; default: the latest. */
  asOfSeq?: number;
  concepts?: readonly string[];
  economies?: readonly string[];
}

/** Read a source's values exactly as they stood after vintage `asOfSeq` (default: latest). */
export async function readAsOf(store: Store, q: AsOfQuery): Promise<StoredObservation[]> {
  const params: unknown[] = [q.source, q.asOfSeq ?? 2147483647];
  let filter = "";
  if (q.concepts?.length) {
    params.push(q.concepts);
    filter += ` AND s.concept = ANY($${params.length}::text[])`;
  }
  if (q.economies?.length) {
    params.push(q.economies);
    filter += ` AND s.economy_code = ANY($${params.length}::text[])`;
  }
  const r = await store.sql.query<{
    economy_code: string;
    concept: Concept;
    unit: string;
    period: string;
    year: number;
    value: number | null;
    status: string | null;
    removed: boolean;
    vintage_seq: number;
  }>(
    `SELECT * FROM (
       SELECT DISTINCT ON (o.series_id, o.period) s.economy_code, s.concept, s.unit, o.period, o.year, o.value, o.status, o.removed, o.vintage_seq
         FROM observation o
         JOIN series s ON s.id = o.series_id
         JOIN source src ON src.id = s.source_id
        WHERE src.name = $1 AND o.vintage_seq <= $2 ${filter}
        ORDER BY o.series_id, o.period, o.vintage_seq DESC
     ) t WHERE NOT removed ORDER BY economy_code, concept, unit, period`,
    params,
  );
  return r.rows.map((x) => ({
    economy: x.economy_code,
    concept: x.concept,
    unit: x.unit,
    period: x.period,
    year: x.year,
    value: x.value as number,
    status: x.status,
    setInSeq: x.vintage_seq,
  }));
}

export interface Revision {
  economy: string;
  concept: string;
  unit: string;
  period: string;
  kind: "added" | "revised" | "removed";
  oldValue: number | null;
  newValue: number | null;
  oldStatus: string | null;
  newStatus: string | null;
}

/** What changed in a source between two vintages (by seq): added, revised and removed values. */
export async function revisionsBetween(
  store: Store,
  q: { source: string; fromSeq: number; toSeq: number; concepts?: readonly string[] },
): Promise<Revision[]> {
  const params: unknown[] = [q.source, q.fromSeq, q.toSeq];
  let filter = "";
  if (q.concepts?.length) {
    params.push(q.concepts);
    filter = ` AND s.concept = ANY($4::text[])`;
  }
  const stateAt = (seqParam: string) => `
    SELECT DISTINCT ON (o.series_id, o.period) o.series_id, o.period, o.value, o.status, o.removed
      FROM observation o JOIN series s ON s.id = o.series_id JOIN source src ON src.id = s.source_id
     WHERE src.name = $1 AND o.vintage_seq <= ${seqParam} ${filter}
     ORDER BY o.series_id, o.period, o.vintage_seq DESC`;
  const r = await store.sql.query<{
    economy_code: string;
    concept: string;
    unit: string;
    period: string;
    old_value: number | null;
    new_value: number | null;
    old_status: string | null;
    new_status: string | null;
    old_present: boolean;
    new_present: boolean;
  }>(
    `WITH a AS (${stateAt("$2")}), b AS (${stateAt("$3")})
     SELECT s.economy_code, s.concept, s.unit, COALESCE(a.period, b.period) AS period,
            a.value AS old_value, b.value AS new_value, a.status AS old_status, b.status AS new_status,
            (a.series_id IS NOT NULL AND NOT a.removed) AS old_present,
            (b.series_id IS NOT NULL AND NOT b.removed) AS new_present
       FROM a FULL OUTER JOIN b ON a.series_id = b.series_id AND a.period = b.period
       JOIN series s ON s.id = COALESCE(a.series_id, b.series_id)
      WHERE (a.series_id IS NULL OR a.removed) IS DISTINCT FROM (b.series_id IS NULL OR b.removed)
         OR (NOT a.removed AND NOT b.removed AND (a.value IS DISTINCT FROM b.value OR a.status IS DISTINCT FROM b.status))
      ORDER BY s.economy_code, s.concept, s.unit, 4`,
    params,
  );
  const out: Revision[] = [];
  for (const x of r.rows) {
    if (!x.old_present && !x.new_present) continue;
    const kind = !x.old_present ? "added" : !x.new_present ? "removed" : "revised";
    out.push({
      economy: x.economy_code,
      concept: x.concept,
      unit: x.unit,
      period: x.period,
      kind,
      oldValue: x.old_present ? x.old_value : null,
      newValue: x.new_present ? x.new_value : null,
      oldStatus: x.old_present ? x.old_status : null,
      newStatus: x.new_present ? x.new_status : null,
    });
  }
  return out;
}
