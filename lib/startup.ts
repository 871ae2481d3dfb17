/**
 * Server start-up (called from instrumentation.ts): store, migrations, demo workspace, scheduler.
 * Known problems end the process with one sentence naming the setting; the launcher
 * (scripts/start.mjs) shows it.
 */
import { ConfigError } from "./config";
import { appConfig, getStore } from "./store";

const flag = globalThis as { __ideafrontStarted?: Promise<void> };

export function startServer(): Promise<void> {
  return (flag.__ideafrontStarted ??= start());
}

async function start(): Promise<void> {
  try {
    const cfg = appConfig();
    const store = await getStore();
    const { applyConfigFile } = await import("./store/config-file");
    for (const line of await applyConfigFile(store)) console.log(`[config] ${line}`);
    if (cfg.demo) {
      const { ensureDemoWorkspace } = await import("./jobs/demo");
      await ensureDemoWorkspace(store, { password: cfg.demoPassword, onProgress: (l) => console.log(`[demo] ${l}`) });
    }
    if (cfg.scheduler) {
      const { startScheduler } = await import("./jobs/scheduler");
      await startScheduler(store, { instance: cfg.instance, demoPassword: cfg.demoPassword });
    }
  } catch (err) {
    const e = err as Error;
    if (err instanceof ConfigError || e?.name === "MigrationError") {
      console.error(`[ideafront] ${e.message}`);
    } else {
      console.error("[ideafront] start-up failed:", err);
    }
    process.exit(1);
  }
}
