/**
 * Helpers shared by the commands: opening the store named by the environment, turning known
 * errors into one sentence on stderr, progress lines.
 */
import { ConfigError, readConfig, type AppConfig } from "../config";
import { AppError } from "../errors";

/** Thrown by a command for a usage or input problem: printed as one sentence, exit code 2. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "UsageError";
  }
}

export function cliConfig(): AppConfig {
  return readConfig(process.env);
}

/** Open and migrate the store of the environment (DATABASE_URL or IDEAFRONT_DATA). */
export async function openCliStore() {
  const cfg = cliConfig();
  const { openStore } = await import("../store/db");
  const { migrate } = await import("../store/migrate");
  const store = await openStore(cfg.databaseUrl ? { databaseUrl: cfg.databaseUrl } : { dataDir: cfg.dataDir });
  await migrate(store);
  return store;
}

/** Progress for long runs: on stderr, so stdout stays clean for data. */
export function progress(message: string): void {
  if (process.env.IDEAFRONT_QUIET !== "1") process.stderr.write(`${message}\n`);
}

/** Print a known error as one sentence and return the exit code; unknown errors keep their stack. */
export function reportError(err: unknown): number {
  const e = err as { name?: string; message?: string; code?: string };
  if (err instanceof ConfigError || err instanceof UsageError) {
    console.error(err.message);
    return err instanceof UsageError ? 2 : 1;
  }
  if (err instanceof AppError) {
    console.error(err.message);
    return 1;
  }
  const known = ["IngestError", "MigrationError", "ReleaseError", "ImportError", "SourceDefinitionError", "ConnectorError", "FetchError", "KpfSpecError"];
  if (e?.name && known.includes(e.name)) {
    console.error(e.message);
    return 1;
  }
  console.error(err);
  return 1;
}
