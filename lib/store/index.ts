/**
 * The process-wide store of the running app (server, worker, command line): opened once from the
 * configuration and kept on globalThis, because Next evaluates shared modules once per bundle.
 */
import { readConfig, type AppConfig } from "../config";
import { openStore, type Store } from "./db";
import { migrate, migrationStatus, type MigrationStatus } from "./migrate";

type Holder = { store?: Promise<Store>; config?: AppConfig };
const holder = ((globalThis as Record<string, unknown>).__ideafrontStore ??= {}) as Holder;

export function appConfig(): AppConfig {
  return (holder.config ??= readConfig());
}

/** The app's store, opened and migrated on first use. */
export function getStore(): Promise<Store> {
  if (!holder.store) {
    const cfg = appConfig();
    holder.store = (async () => {
      const store = await openStore(cfg.databaseUrl ? { databaseUrl: cfg.databaseUrl } : { dataDir: cfg.dataDir });
      await migrate(store);
      return store;
    })();
    holder.store.catch(() => {
      holder.store = undefined;
    });
  }
  return holder.store;
}

export async function closeStore(): Promise<void> {
  const s = holder.store;
  holder.store = undefined;
  if (s) await (await s).close();
}

export type { Store, MigrationStatus };
export { migrationStatus };
