/**
 * The optional configuration file (IDEAFRONT_CONFIG, default ./ideafront.config.json): source
 * schedules, time zones and switches, and the alert threshold, kept in version control by teams
 * that prefer files to clicking. Applied at every start; the UI can change the same settings later.
 *
 *   { "sources": { "demo-statistics-office": { "schedule": "0 6 * * 1", "timezone": "Europe/Paris", "enabled": true } },
 *     "alerts": { "gStarThreshold": 0.001 } }
 */
import fs from "node:fs";
import path from "node:path";
import { z } from "zod";
import { validate as isValidCron } from "node-cron";
import { ConfigError } from "../config";
import type { Store } from "./db";
import { setAlertSettings } from "./fits";
import { updateSourceSettings } from "./sources";
import { isTimeZone } from "../ingestion/sources";

const timeZone = z.string().refine(isTimeZone, "must be an IANA time zone, e.g. Europe/Paris");

export const configFileSchema = z.strictObject({
  sources: z
    .record(
      z.string(),
      z.strictObject({
        schedule: z.string().refine((s) => isValidCron(s), "must be a cron expression (minute hour day month weekday)").optional(),
        timezone: timeZone.optional(),
        enabled: z.boolean().optional(),
      }),
    )
    .default({}),
  alerts: z.strictObject({ gStarThreshold: z.number().min(0).max(0.1) }).optional(),
});
export type ConfigFile = z.infer<typeof configFileSchema>;

/** Read and validate the file; null when there is none. Throws ConfigError naming file and field. */
export function readConfigFile(env: NodeJS.ProcessEnv = process.env): { file: string; config: ConfigFile } | null {
  const file = path.resolve(env.IDEAFRONT_CONFIG ?? "ideafront.config.json");
  if (!fs.existsSync(file)) {
    if (env.IDEAFRONT_CONFIG) throw new ConfigError("IDEAFRONT_CONFIG", `The configuration file in IDEAFRONT_CONFIG (${file}) does not exist.`);
    return null;
  }
  let raw: unknown;
  try {
    raw = JSON.parse(fs.readFileSync(file, "utf8"));
  } catch (err) {
    throw new ConfigError("IDEAFRONT_CONFIG", `The configuration file ${file} is not valid JSON: ${(err as Error).message}.`);
  }
  const r = configFileSchema.safeParse(raw);
  if (!r.success) {
    const i = r.error.issues[0]!;
    throw new ConfigError("IDEAFRONT_CONFIG", `The configuration file ${file}, field ${i.path.join(".") || "(top)"}: ${i.message}.`);
  }
  return { file, config: r.data };
}

/** Apply the file to the store; returns lines saying what changed. Unknown sources are an error. */
export async function applyConfigFile(store: Store, env: NodeJS.ProcessEnv = process.env): Promise<string[]> {
  const found = readConfigFile(env);
  if (!found) return [];
  const lines: string[] = [];
  for (const [name, s] of Object.entries(found.config.sources)) {
    const row = await store.prisma.source.findUnique({ where: { name } });
    if (!row) throw new ConfigError("IDEAFRONT_CONFIG", `The configuration file ${found.file}, field sources.${name}: no source of that name.`);
    const data = { ...(s.schedule ? { schedule: s.schedule } : {}), ...(s.timezone ? { timezone: s.timezone } : {}), ...(s.enabled !== undefined ? { enabled: s.enabled } : {}) };
    if (Object.keys(data).length) {
      try {
        await updateSourceSettings(store, name, data);
      } catch (err) {
        throw new ConfigError("IDEAFRONT_CONFIG", `The configuration file ${found.file}, field sources.${name}: ${(err as Error).message}`);
      }
      lines.push(`source ${name}: ${Object.entries(data).map(([k, v]) => `${k} ${v}`).join(", ")}`);
    }
  }
  if (found.config.alerts) {
    await setAlertSettings(store, found.config.alerts);
    lines.push(`alert threshold ${found.config.alerts.gStarThreshold}`);
  }
  return lines;
}
