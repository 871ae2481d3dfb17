/**
 * The scheduler: one node-cron task per enabled source ("fetch:<source>", on the source's own
 * schedule and time zone). Each tick is claimed through runJob, so with several app or worker
 * instances on one database each scheduled run happens once. Every minute the tasks are
 * reconciled with the sources table, so schedule changes made in the UI (by any instance) apply
 * without a restart.
 */
import cron, { type ScheduledTask } from "node-cron";
import type { Store } from "../store/db";
import { fetchSource } from "./fetch-source";
import { runJob, type JobDefinition } from "./runner";
import { refitAll, type RefitOutcome } from "./refit";
import { getModelInputs, inputSources } from "../store/panel";

interface SchedulerState {
  tasks: Map<string, { task: ScheduledTask; key: string }>;
  timer: NodeJS.Timeout;
  store: Store;
  /** Runs started by this scheduler and not yet finished (stopScheduler waits for them). */
  running: Set<Promise<unknown>>;
}
const holder = globalThis as { __ideafrontScheduler?: SchedulerState };

/** Longest random wait of an instance before it claims a scheduled tick. */
const CLAIM_JITTER_MS = 250;

/**
 * The fetch job of one source: fetch, store a new vintage when the release changed, then refit the
 * active specs when the source feeds the model. The refit also runs when the release did not
 * change: a run that stopped after committing its vintage (crash, database restart) left the fit
 * sets behind, and the next run completes that work; when the fit sets are current, refitAll
 * stores nothing.
 */
export function fetchJob(source: { name: string; schedule: string; timezone: string }, opts: { demoPassword?: string; refit?: boolean } = {}): JobDefinition {
  return {
    name: `fetch:${source.name}`,
    schedule: source.schedule,
    timezone: source.timezone,
    async run(ctx) {
      await ctx.progress(0, 2, `fetching ${source.name}`);
      const r = await fetchSource(ctx.store, source.name, { now: ctx.tick, demoPassword: opts.demoPassword });
      let outcomes: RefitOutcome[] = [];
      if (opts.refit !== false) {
        const inputs = await getModelInputs(ctx.store);
        if (inputs && inputSources(inputs).includes(source.name)) {
          await ctx.progress(1, 2, r.status === "new-vintage" ? "refitting the active specs" : "checking that the fit sets are current");
          outcomes = await refitAll(ctx.store, { jobRunId: ctx.runId });
        }
      }
      const fitted = outcomes.filter((o) => o.status === "fitted");
      await ctx.progress(2, 2, r.status);
      return {
        counts: {
          newVintages: r.status === "new-vintage" ? 1 : 0,
          added: r.counts.added,
          revised: r.counts.revised,
          removed: r.counts.removed,
          fitSets: fitted.length,
          economiesRefitted: fitted.reduce((n, o) => n + o.economiesRefitted, 0),
        },
        details: { status: r.status, vintage: r.vintage ?? null, refit: outcomes },
      };
    },
  };
}

/** The manual refit job: every active spec on the latest vintages. */
export const refitJob: JobDefinition = {
  name: "refit",
  schedule: "",
  timezone: "UTC",
  async run(ctx) {
    await ctx.progress(0, 1, "refitting the active specs");
    const outcomes = await refitAll(ctx.store, { jobRunId: ctx.runId });
    await ctx.progress(1, 1, "done");
    return {
      counts: { fitSets: outcomes.filter((o) => o.status === "fitted").length, economiesRefitted: outcomes.reduce((n, o) => n + o.economiesRefitted, 0) },
      details: { outcomes },
    };
  },
};

/** The scheduled second of a tick: the same on every instance (schedules may have a seconds field). */
export function tickOf(date: Date): Date {
  return new Date(Math.floor(date.getTime() / 1000) * 1000);
}

async function reconcile(state: SchedulerState, opts: { instance: string; demoPassword?: string }): Promise<void> {
  const sources = await state.store.prisma.source.findMany({ where: { enabled: true } });
  const wanted = new Map(sources.map((s) => [`fetch:${s.name}`, s]));
  for (const [name, t] of state.tasks) {
    const s = wanted.get(name);
    if (!s || t.key !== `${s.schedule}|${s.timezone}`) {
      await t.task.destroy();
      state.tasks.delete(name);
    }
  }
  for (const [name, s] of wanted) {
    if (state.tasks.has(name)) continue;
    const job = fetchJob(s, { demoPassword: opts.demoPassword });
    const task = cron.schedule(
      job.schedule,
      async (ctx) => {
        const run = runJob(state.store, job, { tick: tickOf(ctx?.date ?? new Date()), trigger: "schedule", instance: opts.instance });
        state.running.add(run);
        try {
          const r = await run;
          if (r.status === "failed") console.error(`[jobs] ${job.name} failed: ${r.error}`);
        } finally {
          state.running.delete(run);
        }
      },
      // Each instance waits a random 0-250 ms before claiming the tick, so the runs spread over the
      // instances instead of all going to the one that happens to answer fastest (the tick itself
      // is the scheduled second, the same everywhere, so it is still claimed once).
      { name: job.name, timezone: job.timezone, noOverlap: true, maxRandomDelay: CLAIM_JITTER_MS },
    );
    state.tasks.set(name, { task, key: `${s.schedule}|${s.timezone}` });
  }
}

/** Start the scheduled tasks (once per process). */
export async function startScheduler(store: Store, opts: { instance: string; demoPassword?: string; reconcileMs?: number }): Promise<{ jobs: string[] }> {
  if (holder.__ideafrontScheduler) return { jobs: [...holder.__ideafrontScheduler.tasks.keys()] };
  const state: SchedulerState = { tasks: new Map(), store, timer: undefined as unknown as NodeJS.Timeout, running: new Set() };
  holder.__ideafrontScheduler = state;
  await reconcile(state, opts);
  state.timer = setInterval(() => {
    reconcile(state, opts).catch((err) => console.error(`[jobs] could not reload the schedules: ${(err as Error).message}`));
  }, opts.reconcileMs ?? 60_000);
  state.timer.unref();
  const jobs = [...state.tasks.keys()];
  console.log(`[jobs] scheduler started with ${jobs.length} job(s): ${jobs.join(", ") || "none"}`);
  return { jobs };
}

/**
 * Stop the scheduled tasks, then wait (at most `waitMs`, default 60 s) for runs in progress to
 * finish and be logged, so a worker stopped with SIGTERM does not leave a run "running" for the
 * next instance to mark abandoned and redo. A run still going after the wait is left to that.
 */
export async function stopScheduler(opts: { waitMs?: number } = {}): Promise<void> {
  const s = holder.__ideafrontScheduler;
  holder.__ideafrontScheduler = undefined;
  if (!s) return;
  clearInterval(s.timer);
  for (const t of s.tasks.values()) await t.task.destroy();
  if (!s.running.size) return;
  console.log(`[jobs] waiting for ${s.running.size} running job${s.running.size === 1 ? "" : "s"} to finish`);
  let timer: NodeJS.Timeout | undefined;
  await Promise.race([
    Promise.allSettled([...s.running]),
    new Promise<void>((resolve) => {
      timer = setTimeout(resolve, opts.waitMs ?? 60_000);
    }),
  ]);
  clearTimeout(timer);
}
