/** Read models for the dashboard: what the workspace holds. */
import type { Store } from "./db";
import { getSetting } from "./settings";

export interface DemoState {
  loaded: boolean;
  loadedAt?: string;
  vintages?: number;
}

export async function demoState(store: Store): Promise<DemoState> {
  const s = await getSetting<{ loadedAt: string; vintages: number }>(store, "demo");
  return s ? { loaded: true, ...s } : { loaded: false };
}

export interface SourceSummary {
  name: string;
  title: string;
  kind: string;
  format: string;
  enabled: boolean;
  isDemo: boolean;
  schedule: string;
  timezone: string;
  vintages: number;
  latest: { label: string; seq: number; fetchedAt: Date; observationCount: number } | null;
}

export async function sourceSummaries(store: Store): Promise<SourceSummary[]> {
  const rows = await store.prisma.source.findMany({
    orderBy: [{ isDemo: "desc" }, { name: "asc" }],
    include: { _count: { select: { vintages: true } }, vintages: { orderBy: { seq: "desc" }, take: 1 } },
  });
  return rows.map((s) => ({
    name: s.name,
    title: s.title,
    kind: s.kind,
    format: s.format,
    enabled: s.enabled,
    isDemo: s.isDemo,
    schedule: s.schedule,
    timezone: s.timezone,
    vintages: s._count.vintages,
    latest: s.vintages[0]
      ? { label: s.vintages[0].label, seq: s.vintages[0].seq, fetchedAt: s.vintages[0].fetchedAt, observationCount: s.vintages[0].observationCount }
      : null,
  }));
}

export interface EconomyCoverage {
  code: string;
  name: string;
  kind: "ECONOMY" | "AGGREGATE";
  isDemo: boolean;
  concepts: { concept: string; firstYear: number; lastYear: number; values: number }[];
}

/** Economies with the years each concept covers in the latest state of every source. */
export async function economyCoverage(store: Store, opts: { includeAggregates?: boolean } = {}): Promise<EconomyCoverage[]> {
  const r = await store.sql.query<{ code: string; name: string; kind: "ECONOMY" | "AGGREGATE"; is_demo: boolean; concept: string | null; first_year: number | null; last_year: number | null; n: number | null }>(
    `WITH latest AS (
       SELECT DISTINCT ON (o.series_id, o.period) o.series_id, o.year, o.removed
         FROM observation o ORDER BY o.series_id, o.period, o.vintage_seq DESC
     )
     SELECT e.code, e.name, e.kind::text AS kind, e.is_demo, s.concept, min(l.year)::int AS first_year, max(l.year)::int AS last_year, count(l.year)::int AS n
       FROM economy e
       LEFT JOIN series s ON s.economy_code = e.code
       LEFT JOIN latest l ON l.series_id = s.id AND NOT l.removed
      WHERE ($1::bool OR e.kind = 'ECONOMY')
      GROUP BY e.code, e.name, e.kind, e.is_demo, s.concept
      ORDER BY e.is_demo DESC, e.name, s.concept`,
    [opts.includeAggregates ?? false],
  );
  const out = new Map<string, EconomyCoverage>();
  for (const x of r.rows) {
    const e = out.get(x.code) ?? { code: x.code, name: x.name, kind: x.kind, isDemo: x.is_demo, concepts: [] };
    if (x.concept && x.n) e.concepts.push({ concept: x.concept, firstYear: x.first_year!, lastYear: x.last_year!, values: x.n });
    out.set(x.code, e);
  }
  return [...out.values()];
}
