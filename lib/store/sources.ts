/**
 * Changing a stored source's switch, schedule or time zone. The columns (which the scheduler
 * reads) and the stored definition (which the fetch reads) change together, and the definition is
 * validated again, so a source whose facts are still unverified cannot be switched on.
 */
import { parseSourceDefinition } from "../ingestion/sources";
import { AppError } from "../errors";
import type { Store } from "./db";

export interface SourceSettings {
  enabled?: boolean;
  schedule?: string;
  timezone?: string;
}

/**
 * Apply `settings` to source `name`. Throws AppError NOT_FOUND for an unknown source and
 * VALIDATION (naming the field) when the definition would no longer be valid.
 */
export async function updateSourceSettings(store: Store, name: string, settings: SourceSettings): Promise<{ name: string; enabled: boolean; schedule: string; timezone: string }> {
  const row = await store.prisma.source.findUnique({ where: { name } });
  if (!row) throw new AppError("NOT_FOUND", `No source named "${name}".`, { field: "name" });
  const data = Object.fromEntries(Object.entries(settings).filter(([, v]) => v !== undefined)) as SourceSettings;
  let config: object;
  try {
    config = parseSourceDefinition({ ...(row.config as object), ...data });
  } catch (err) {
    throw new AppError("VALIDATION", (err as Error).message, { field: data.enabled !== undefined ? "enabled" : data.schedule !== undefined ? "schedule" : "timezone" });
  }
  const s = await store.prisma.source.update({ where: { name }, data: { ...data, config } });
  return { name: s.name, enabled: s.enabled, schedule: s.schedule, timezone: s.timezone };
}
