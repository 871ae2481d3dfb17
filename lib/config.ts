/**
 * Runtime configuration, read once from the environment and validated. Every problem is reported
 * as one sentence naming the setting, so that start-up can stop cleanly instead of with a trace.
 */
import path from "node:path";
import { z } from "zod";

export class ConfigError extends Error {
  readonly setting: string;
  constructor(setting: string, message: string) {
    super(message);
    this.name = "ConfigError";
    this.setting = setting;
  }
}

const onOff = z
  .enum(["on", "off", "true", "false", "1", "0", "yes", "no"])
  .transform((v) => v === "on" || v === "true" || v === "1" || v === "yes");

const EnvSchema = z.object({
  DATABASE_URL: z
    .string()
    .trim()
    .optional()
    .transform((v) => (v ? v : undefined))
    .refine((v) => v === undefined || /^postgres(ql)?:\/\//.test(v), {
      message: "must be a postgres:// or postgresql:// connection URL",
    }),
  IDEAFRONT_DATA: z.string().trim().min(1).default("./data"),
  PORT: z.coerce.number().int().min(1).max(65535).default(3000),
  HOST: z.string().trim().min(1).default("0.0.0.0"),
  IDEAFRONT_SCHEDULER: onOff.default(true),
  IDEAFRONT_DEMO: onOff.default(true),
  IDEAFRONT_DEMO_PASSWORD: z.string().min(8).default("ideafront-demo"),
  IDEAFRONT_INSTANCE: z.string().trim().min(1).optional(),
});

export interface AppConfig {
  /** PostgreSQL server URL; absent means the embedded store. */
  databaseUrl?: string;
  storeKind: "embedded" | "postgres";
  /** Absolute folder of the embedded store (and other local state). */
  dataDir: string;
  port: number;
  host: string;
  scheduler: boolean;
  demo: boolean;
  demoPassword: string;
  instance: string;
}

/** Parse the environment; throws ConfigError naming the first bad setting. */
export function readConfig(env: NodeJS.ProcessEnv = process.env): AppConfig {
  const parsed = EnvSchema.safeParse(env);
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    const setting = String(issue.path[0] ?? "environment");
    const shown = setting === "DATABASE_URL" || setting.includes("PASSWORD") ? "" : ` (got "${String(env[setting] ?? "")}")`;
    throw new ConfigError(setting, `Setting ${setting} is invalid: ${issue.message}${shown}.`);
  }
  const e = parsed.data;
  return {
    databaseUrl: e.DATABASE_URL,
    storeKind: e.DATABASE_URL ? "postgres" : "embedded",
    dataDir: path.resolve(e.IDEAFRONT_DATA),
    port: e.PORT,
    host: e.HOST,
    scheduler: e.IDEAFRONT_SCHEDULER,
    demo: e.IDEAFRONT_DEMO,
    demoPassword: e.IDEAFRONT_DEMO_PASSWORD,
    instance: e.IDEAFRONT_INSTANCE ?? `${process.pid}@${hostnameSafe()}`,
  };
}

function hostnameSafe(): string {
  try {
    return process.env.HOSTNAME || "localhost";
  } catch {
    return "localhost";
  }
}

/** A database URL with its password replaced, for messages and logs. */
export function redactUrl(url: string): string {
  try {
    const u = new URL(url);
    if (u.password) u.password = "***";
    return u.toString();
  } catch {
    return "(unparseable URL)";
  }
}
