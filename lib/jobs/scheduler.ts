/**
 * The scheduler: one node-cron task per enabled source ("fetch:<source>", on the source's own
 * schedule and time zone). Each tick is claimed through runJob, so with several app or worker
 * instances on one database each scheduled run happens once.
 */
import cron, { type ScheduledTask } from "node-cron";
import type { Store } from "../store/db";
import { fetchSource } from "./fetch-source";
import { runJob, type JobDefinition } from "./runner";
import { refitAll } from "./refit";
import { getModelInputs, inputSources } from "../store/panel";

const holder = globalThis as { __ideafrontScheduler?: { tasks: ScheduledTask[] } };

/**
 * The fetch job of one source: fetch, store a new vintage when the release changed, then refit the
 * active specs when the source feeds the model.
 */
export function fetchJob(source: { name: string; schedule: string; timezone: string }, opts: { demoPassword?: string; refit?: boolean } = {}): JobDefinition {
  return {
    name: `fetch:${source.name}`,
    schedule: source.schedule,
    timezone: source.timezone,
    async run(ctx) {
      await ctx.progress(0, 2, `fetching ${source.name}`);
      const r = await fetchSource(ctx.store, source.name, { now: ctx.tick, demoPassword: opts.demoPassword });
      let fits = 0;
      if (r.status === "new-vintage" && opts.refit !== false) {
        const inputs = await getModelInputs(ctx.store);
        if (inputs && inputSources(inputs).includes(source.name)) {
          await ctx.progress(1, 2, "refitting the active specs");
          const outcomes = await refitAll(ctx.store, { jobRunId: ctx.runId });
          fits = outcomes.filter((o) => o.status === "fitted").length;
        }
      }
      await ctx.progress(2, 2, r.status);
      return {
        counts: { newVintages: r.status === "new-vintage" ? 1 : 0, added: r.counts.added, revised: r.counts.revised, removed: r.counts.removed, fitSets: fits },
        details: { status: r.status, vintage: r.vintage ?? null },
      };
    },
  };
}

/** Start the scheduled tasks (once per process). */
export async function startScheduler(store: Store, opts: { instance: string; demoPassword?: string }): Promise<{ jobs: string[] }> {
  if (holder.__ideafrontScheduler) return { jobs: [] };
  const sources = await store.prisma.source.findMany({ where: { enabled: true } });
  const tasks: ScheduledTask[] = [];
  const jobs: string[] = [];
  for (const s of sources) {
    const job = fetchJob(s, { demoPassword: opts.demoPassword });
    const task = cron.schedule(
      job.schedule,
      async (ctx) => {
        // The tick is the scheduled minute, the same on every instance.
        const tick = new Date(Math.floor((ctx?.date ?? new Date()).getTime() / 60_000) * 60_000);
        const r = await runJob(store, job, { tick, trigger: "schedule", instance: opts.instance });
        if (r.status === "failed") console.error(`[jobs] ${job.name} failed: ${r.error}`);
      },
      { name: job.name, timezone: job.timezone, noOverlap: true },
    );
    tasks.push(task);
    jobs.push(job.name);
  }
  holder.__ideafrontScheduler = { tasks };
  console.log(`[jobs] scheduler started with ${jobs.length} job(s): ${jobs.join(", ") || "none"}`);
  return { jobs };
}

export async function stopScheduler(): Promise<void> {
  const s = holder.__ideafrontScheduler;
  holder.__ideafrontScheduler = undefined;
  for (const t of s?.tasks ?? []) await t.destroy();
}
