/**
 * Process entry point of a worker: the scheduler without the web server (`npm run worker`,
 * `npx ideafront worker`). Several workers and app instances may share one PostgreSQL database;
 * each scheduled run is claimed once (lib/jobs/runner.ts).
 */
import { cliConfig, openCliStore } from "../lib/cli/shared";
import { startScheduler, stopScheduler } from "../lib/jobs/scheduler";

export async function runWorker(): Promise<void> {
  const cfg = await cliConfig();
  const store = await openCliStore();
  const { applyConfigFile } = await import("../lib/store/config-file");
  for (const line of await applyConfigFile(store)) console.log(`configuration file: ${line}`);
  const { jobs } = await startScheduler(store, { instance: cfg.instance, demoPassword: cfg.demoPassword });
  console.log(`Worker ${cfg.instance} running ${jobs.length} scheduled job(s) on the ${store.kind} store. Ctrl+C stops it.`);
  await new Promise<void>((resolve) => {
    const stop = () => resolve();
    process.once("SIGINT", stop);
    process.once("SIGTERM", stop);
  });
  await stopScheduler();
  await store.close();
}
