/**
 * Helpers shared by the commands: opening the store named by the environment, turning known
 * errors into one sentence on stderr, progress lines. Nothing heavy is imported at the top, so a
 * command that needs no database (fit, tfp) starts without loading the store or zod.
 */
import type { AppConfig } from "../config";

/** Thrown by a command for a usage or input problem: printed as one sentence, exit code 2. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "UsageError";
  }
}

/** The settings of the environment (DATABASE_URL, IDEAFRONT_DATA, ...); throws ConfigError. */
export async function cliConfig(): Promise<AppConfig> {
  const { readConfig } = await import("../config");
  return readConfig(process.env);
}

/** Open and migrate the store of the environment (DATABASE_URL or IDEAFRONT_DATA). */
export async function openCliStore() {
  const cfg = await cliConfig();
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

/** Errors whose message is written for the user: one sentence, no stack. */
const KNOWN = new Set([
  "ConfigError",
  "AppError",
  "IngestError",
  "MigrationError",
  "ReleaseError",
  "ImportError",
  "SourceDefinitionError",
  "ConnectorError",
  "FetchError",
  "KpfSpecError",
]);

/** Print a known error as one sentence and return the exit code; unknown errors keep their stack. */
export function reportError(err: unknown): number {
  const e = err as { name?: string; message?: string };
  if (err instanceof UsageError) {
    console.error(err.message);
    return 2;
  }
  if (e?.name && KNOWN.has(e.name)) {
    console.error(e.message);
    return 1;
  }
  console.error(err);
  return 1;
}
