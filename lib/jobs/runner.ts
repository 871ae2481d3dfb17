/**
 * Running a job: one row in job_run per (job, tick). An instance claims a tick by inserting that
 * row; the unique index makes the claim atomic across every app and worker instance on one
 * database, so a scheduled run happens exactly once and never overlaps itself. The run log keeps
 * counts, progress (with a heartbeat) and the error in one sentence.
 */
import type { Store } from "../store/db";

export interface JobContext {
  store: Store;
  runId: number;
  tick: Date;
  trigger: "schedule" | "manual" | "startup";
  /** Record progress ("3 of 12 sources") and refresh the heartbeat. */
  progress(done: number, total: number, message: string): Promise<void>;
}

export interface JobOutcome {
  counts: Record<string, number>;
  details?: Record<string, unknown>;
  /** A run that completed but with failures of some parts (e.g. one source of five). */
  partialFailure?: string;
}

export interface JobDefinition {
  name: string;
  /** Cron expression (node-cron syntax). */
  schedule: string;
  timezone: string;
  run(ctx: JobContext): Promise<JobOutcome>;
}

export interface RunResult {
  status: "succeeded" | "failed" | "partial" | "skipped";
  runId: number | null;
  outcome?: JobOutcome;
  error?: string;
}

/** A run whose heartbeat is older than this is considered dead (its worker crashed). */
export const STALE_AFTER_MS = 10 * 60_000;

/** One sentence for the run log: the message without stack or line breaks. */
export function oneSentence(err: unknown): string {
  const m = (err as Error)?.message ?? String(err);
  const first = m.split("\n")[0]!.trim();
  return first.length > 400 ? `${first.slice(0, 397)}...` : first;
}

/**
 * Claim (job, tick) and run it. Returns "skipped" when another instance already claimed that tick.
 * Errors are recorded, never thrown.
 */
export async function runJob(
  store: Store,
  job: JobDefinition,
  opts: { tick: Date; trigger: JobContext["trigger"]; instance: string; onClaimed?: (runId: number | null) => void },
): Promise<RunResult> {
  await markAbandonedRuns(store);
  // Claim the tick, unless a run of the same job is still going (a run never overlaps itself).
  // The transaction-scoped advisory lock serialises claims of one job across instances.
  const claimed = await store.transaction(async (tx) => {
    await tx.query(`SELECT pg_advisory_xact_lock(hashtext($1))`, [`ideafront:job:${job.name}`]);
    const busy = await tx.query<{ id: number }>(
      `SELECT id FROM job_run WHERE job = $1 AND status = 'running' AND COALESCE(heartbeat_at, started_at) >= $2 LIMIT 1`,
      [job.name, new Date(Date.now() - STALE_AFTER_MS)],
    );
    if (busy.rows.length) {
      // Recorded, so the log says why this tick did no work.
      await tx.query(
        `INSERT INTO job_run (job, tick, trigger, status, instance, started_at, finished_at, error)
         VALUES ($1, $2, $3, 'skipped', $4, now(), now(), $5) ON CONFLICT (job, tick) DO NOTHING`,
        [job.name, opts.tick, opts.trigger, opts.instance, `Skipped: run ${busy.rows[0]!.id} of this job was still in progress.`],
      );
      return { rows: [] as { id: number }[], busy: true };
    }
    const r = await tx.query<{ id: number }>(
      `INSERT INTO job_run (job, tick, trigger, status, instance, started_at, heartbeat_at)
       VALUES ($1, $2, $3, 'running', $4, now(), now())
       ON CONFLICT (job, tick) DO NOTHING RETURNING id`,
      [job.name, opts.tick, opts.trigger, opts.instance],
    );
    return { rows: r.rows, busy: false };
  });
  if (claimed.busy) {
    opts.onClaimed?.(null);
    return { status: "skipped", runId: null, error: "a run of this job is still in progress" };
  }
  const runId = claimed.rows[0]?.id;
  opts.onClaimed?.(runId ?? null);
  if (runId === undefined) return { status: "skipped", runId: null };
  const ctx: JobContext = {
    store,
    runId,
    tick: opts.tick,
    trigger: opts.trigger,
    progress: async (done, total, message) => {
      await store.sql.query(`UPDATE job_run SET progress = $2::jsonb, heartbeat_at = now() WHERE id = $1`, [runId, JSON.stringify({ done, total, message })]);
    },
  };
  try {
    const outcome = await job.run(ctx);
    const status = outcome.partialFailure ? "partial" : "succeeded";
    await store.sql.query(
      `UPDATE job_run SET status = $2, finished_at = now(), heartbeat_at = now(), counts = $3::jsonb, details = $4::jsonb, error = $5 WHERE id = $1`,
      [runId, status, JSON.stringify(outcome.counts), JSON.stringify(outcome.details ?? null), outcome.partialFailure ?? null],
    );
    return { status, runId, outcome };
  } catch (err) {
    const error = oneSentence(err);
    await store.sql
      .query(`UPDATE job_run SET status = 'failed', finished_at = now(), heartbeat_at = now(), error = $2, details = $3::jsonb WHERE id = $1`, [
        runId,
        error,
        JSON.stringify({ name: (err as Error)?.name, message: (err as Error)?.message, stack: (err as Error)?.stack?.split("\n").slice(0, 8) }),
      ])
      .catch((e) => console.error(`[jobs] could not record the failure of run ${runId}:`, e));
    return { status: "failed", runId, error };
  }
}

/** Runs left "running" by a crashed instance are marked abandoned, so the log stays true. */
export async function markAbandonedRuns(store: Store, now = new Date()): Promise<number> {
  const r = await store.sql.query<{ id: number }>(
    `UPDATE job_run SET status = 'abandoned', finished_at = $1, error = 'The instance running this job stopped before it finished (no heartbeat); the next run redoes the work.'
      WHERE status = 'running' AND COALESCE(heartbeat_at, started_at) < $2 RETURNING id`,
    [now, new Date(now.getTime() - STALE_AFTER_MS)],
  );
  return r.rows.length;
}
