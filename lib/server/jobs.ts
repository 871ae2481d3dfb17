/** Starting a job from the web app ("run now"): claimed like a scheduled run, run in this process. */
import "server-only";
import { AppError } from "../errors";
import { appConfig, getStore } from "../store";
import { fetchJob, refitJob } from "../jobs/scheduler";
import { runJob } from "../jobs/runner";

const inFlight = ((globalThis as Record<string, unknown>).__ideafrontManualRuns ??= new Set<Promise<unknown>>()) as Set<Promise<unknown>>;

/** Start `job` now; resolves with the run id once the run is claimed (the work goes on in the background). */
export async function startJobNow(job: string): Promise<{ runId: number }> {
  const store = await getStore();
  const cfg = appConfig();
  let def;
  if (job === "refit") def = refitJob;
  else {
    const name = job.slice("fetch:".length);
    const source = await store.prisma.source.findUnique({ where: { name } });
    if (!source) throw new AppError("NOT_FOUND", `No source named "${name}".`, { field: "job" });
    def = fetchJob(source, { demoPassword: cfg.demoPassword });
  }
  let resolveClaim!: (id: number | null) => void;
  const claimed = new Promise<number | null>((r) => (resolveClaim = r));
  const run = runJob(store, def, { tick: new Date(), trigger: "manual", instance: cfg.instance, onClaimed: resolveClaim })
    .catch((err) => console.error(`[jobs] manual ${job} failed to run:`, err))
    .finally(() => inFlight.delete(run));
  inFlight.add(run);
  const runId = await Promise.race([claimed, run.then(() => null)]);
  if (runId === null) throw new AppError("CONFLICT", `A run of ${job} is already in progress; wait for it to finish.`, { field: "job" });
  return { runId };
}
