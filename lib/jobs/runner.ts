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

/**
 * The stale period in force: IDEAFRONT_STALE_AFTER_MS when set to a positive whole number (tests
 * and drills use seconds), else STALE_AFTER_MS. Read at each call, so every instance of one
 * database should be given the same value.
 */
export function staleAfterMs(env: NodeJS.ProcessEnv = process.env): number {
  const v = Number(env.IDEAFRONT_STALE_AFTER_MS);
  return Number.isInteger(v) && v > 0 ? v : STALE_AFTER_MS;
}

/** How often a running job refreshes its heartbeat: well inside the stale period. */
function heartbeatEveryMs(): number {
  return Math.max(250, Math.floor(staleAfterMs() / 4));
}

/**
 * One sentence for the run log: the message without stack or line breaks (the lines of a
 * multi-line message, such as the problems of a rejected release, are joined with "; ").
 */
export function oneSentence(err: unknown): string {
  const m = describeDatabaseLoss(err) ?? (err as Error)?.message ?? String(err);
  const lines = m.split("\n").map((l) => l.trim()).filter(Boolean);
  const [head = "", ...rest] = lines;
  const text = rest.length ? `${head}${/[:;,]$/.test(head) ? "" : ";"} ${rest.join("; ")}` : head;
  return text.length > 400 ? `${text.slice(0, 397)}...` : text;
}

/** PostgreSQL codes of a connection ended by the server (admin shutdown, crash, cannot connect now). */
const CONNECTION_LOST_CODES = new Set(["57P01", "57P02", "57P03", "08000", "08003", "08006", "08001", "08004"]);

/** A readable sentence when the error is the database connection going away, else null. */
function describeDatabaseLoss(err: unknown): string | null {
  const e = err as { name?: string; code?: string; message?: string } | null;
  // Failures of statistics APIs have their own sentences (they name the URL).
  if (!e || ["FetchError", "ConnectorError", "ImportError", "IngestError"].includes(e.name ?? "")) return null;
  const m = e.message ?? "";
  const lost =
    (e.code !== undefined && (CONNECTION_LOST_CODES.has(e.code) || e.code === "ECONNREFUSED" || e.code === "ECONNRESET")) ||
    /Connection terminated|terminating connection|the database system is (shutting down|starting up)|connection error and is not queryable/.test(m);
  if (!lost) return null;
  return `The database connection was lost during the run (${m.split("\n")[0]!.trim().replace(/\.$/, "")}); the interrupted step committed nothing and the next run redoes the work.`;
}

/** Run `write` until it succeeds, for a few seconds (a restarting database comes back quickly). */
async function persistently(what: string, write: () => Promise<unknown>): Promise<boolean> {
  const waits = [0, 250, 500, 1000, 2000, 4000, 8000];
  let last: unknown;
  for (const w of waits) {
    if (w) await new Promise((r) => setTimeout(r, w));
    try {
      await write();
      return true;
    } catch (err) {
      last = err;
    }
  }
  console.error(`[jobs] could not record ${what}: ${(last as Error)?.message ?? String(last)}`);
  return false;
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
    // Ages are read on the database clock, the one every instance shares.
    const busy = await tx.query<{ id: number }>(
      `SELECT id FROM job_run WHERE job = $1 AND status = 'running' AND COALESCE(heartbeat_at, started_at) >= now() - $2::float8 * interval '1 millisecond' LIMIT 1`,
      [job.name, staleAfterMs()],
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
  // The heartbeat goes on while the job works (a long fetch or refit must not look dead to the
  // other instances); it stops with the process, so a crashed run goes stale.
  const heartbeat = setInterval(() => {
    store.sql.query(`UPDATE job_run SET heartbeat_at = now() WHERE id = $1 AND status = 'running'`, [runId]).catch(() => {});
  }, heartbeatEveryMs());
  heartbeat.unref();
  try {
    const outcome = await job.run(ctx);
    clearInterval(heartbeat);
    const status = outcome.partialFailure ? "partial" : "succeeded";
    await persistently(`the outcome of run ${runId}`, () =>
      store.sql.query(
        `UPDATE job_run SET status = $2, finished_at = now(), heartbeat_at = now(), counts = $3::jsonb, details = $4::jsonb, error = $5 WHERE id = $1`,
        [runId, status, JSON.stringify(outcome.counts), JSON.stringify(outcome.details ?? null), outcome.partialFailure ?? null],
      ),
    );
    return { status, runId, outcome };
  } catch (err) {
    clearInterval(heartbeat);
    const error = oneSentence(err);
    // A database that went away mid-run is usually back within seconds: keep trying, so the log
    // says why the run failed instead of leaving it "running" until it is marked abandoned.
    await persistently(`the failure of run ${runId}`, () =>
      store.sql.query(`UPDATE job_run SET status = 'failed', finished_at = now(), heartbeat_at = now(), error = $2, details = $3::jsonb WHERE id = $1`, [
        runId,
        error,
        JSON.stringify({ name: (err as Error)?.name, message: (err as Error)?.message, stack: (err as Error)?.stack?.split("\n").slice(0, 8) }),
      ]),
    );
    return { status: "failed", runId, error };
  }
}

/**
 * Runs left "running" by a crashed instance (no heartbeat for the stale period, on the database
 * clock) are marked abandoned, so the log stays true.
 */
export async function markAbandonedRuns(store: Store): Promise<number> {
  const r = await store.sql.query<{ id: number }>(
    `UPDATE job_run SET status = 'abandoned', finished_at = now(), error = 'The instance running this job stopped before it finished (no heartbeat); the next run redoes the work.'
      WHERE status = 'running' AND COALESCE(heartbeat_at, started_at) < now() - $1::float8 * interval '1 millisecond' RETURNING id`,
    [staleAfterMs()],
  );
  return r.rows.length;
}
