/** The run log: read models for the dashboard and the API. */
import type { Store } from "./db";

export interface RunRow {
  id: number;
  job: string;
  tick: Date;
  trigger: string;
  status: string;
  instance: string;
  startedAt: Date;
  finishedAt: Date | null;
  heartbeatAt: Date | null;
  counts: Record<string, number> | null;
  progress: { done: number; total: number; message: string } | null;
  error: string | null;
  details: unknown;
}

function toRow(r: {
  id: number; job: string; tick: Date; trigger: string; status: string; instance: string; startedAt: Date; finishedAt: Date | null; heartbeatAt: Date | null; counts: unknown; progress: unknown; error: string | null; details: unknown;
}): RunRow {
  return { ...r, counts: (r.counts as Record<string, number>) ?? null, progress: (r.progress as RunRow["progress"]) ?? null };
}

export async function listRuns(store: Store, opts: { limit?: number; job?: string } = {}): Promise<RunRow[]> {
  const rows = await store.prisma.jobRun.findMany({ where: opts.job ? { job: opts.job } : {}, orderBy: { id: "desc" }, take: Math.min(opts.limit ?? 50, 500) });
  return rows.map(toRow);
}

export async function findRun(store: Store, id: number): Promise<RunRow | null> {
  const r = await store.prisma.jobRun.findUnique({ where: { id } });
  return r ? toRow(r) : null;
}
