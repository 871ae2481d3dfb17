/** Commands that set up a store: migrate, load the demo workspace, and the start-up checks. */
import type { Command } from "commander";
import { cliConfig, openCliStore, progress } from "../shared";

export function register(program: Command): void {
  program
    .command("migrate")
    .description("apply pending database migrations to the store (DATABASE_URL, else the embedded store in IDEAFRONT_DATA)")
    .action(async () => {
      const { migrationStatus } = await import("../../store/migrate");
      const store = await openCliStore();
      const s = await migrationStatus(store);
      console.log(`Store ${store.kind} at migration ${s.level ?? "(none)"} (${s.applied} applied, ${s.pending.length} pending).`);
      await store.close();
    });

  program
    .command("demo")
    .description("load the invented demo workspace (fictional economies, simulated releases) into the store")
    .action(async () => {
      const { ensureDemoWorkspace } = await import("../../jobs/demo");
      const store = await openCliStore();
      const r = await ensureDemoWorkspace(store, { password: (await cliConfig()).demoPassword, onProgress: progress });
      console.log(r.imported.length ? `Loaded ${r.imported.length} demo releases.` : "The demo workspace is already complete.");
      await store.close();
    });

  program
    .command("preflight", { hidden: true })
    .description("start-up checks used by `npm start`: settings, port, store, migrations, demo workspace")
    .option("--port <port>", "check that this port is free")
    .option("--host <host>", "host the server will listen on", "0.0.0.0")
    .action(async (opts: { port?: string; host: string }) => {
      const cfg = await cliConfig();
      if (opts.port) await assertPortFree(Number(opts.port), opts.host);
      progress(cfg.storeKind === "embedded" ? `Opening the embedded store in ${cfg.dataDir} ...` : "Connecting to the PostgreSQL server in DATABASE_URL ...");
      const store = await openCliStore();
      if (cfg.demo) {
        const { ensureDemoWorkspace } = await import("../../jobs/demo");
        await ensureDemoWorkspace(store, { password: cfg.demoPassword, onProgress: (l) => progress(`  ${l}`) });
      }
      const { applyConfigFile } = await import("../../store/config-file");
      for (const line of await applyConfigFile(store)) progress(`  configuration file: ${line}`);
      await store.close();
    });
  registerWorker(program);
}

async function assertPortFree(port: number, host: string): Promise<void> {
  const { createServer } = await import("node:net");
  const { ConfigError } = await import("../../config");
  await new Promise<void>((resolve, reject) => {
    const srv = createServer();
    srv.once("error", (err: NodeJS.ErrnoException) => {
      if (err.code === "EADDRINUSE") reject(new ConfigError("PORT", `Port ${port} (setting PORT) is already in use; stop the program using it or set PORT to a free port.`));
      else if (err.code === "EACCES") reject(new ConfigError("PORT", `Port ${port} (setting PORT) needs privileges this user does not have; choose a port above 1023.`));
      else reject(new ConfigError("HOST", `Cannot listen on ${host}:${port} (settings HOST and PORT): ${err.message}.`));
    });
    srv.listen(port, host, () => srv.close(() => resolve()));
  });
}

export function registerWorker(program: Command): void {
  program
    .command("worker")
    .description("run the scheduled jobs without the web server (several workers may share one PostgreSQL database)")
    .action(async () => {
      const { runWorker } = await import("../../../jobs/worker");
      await runWorker();
    });
}
