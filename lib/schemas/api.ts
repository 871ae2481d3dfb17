/** zod schemas of every request body and query the HTTP API accepts. */
import { z } from "zod";
import { validate as isValidCron } from "node-cron";
import { isTimeZone } from "../ingestion/sources";

export const sourceName = z.string().regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, "must be a source slug");
export const economyCode = z.string().regex(/^[A-Z0-9]{3}$/, "must be a three-letter economy code");
export const specName = z.string().min(1).max(100);

export const RunNowBody = z.strictObject({
  job: z.union([z.literal("refit"), z.string().regex(/^fetch:[a-z0-9]+(?:-[a-z0-9]+)*$/, 'must be "refit" or "fetch:<source>"')]),
});

export const RunsQuery = z.object({
  limit: z.coerce.number().int().min(1).max(500).default(50),
  job: z.string().max(200).optional(),
});

export const IdParams = z.object({ id: z.coerce.number().int().positive("must be a positive integer") });

export const ChangesQuery = z.object({
  spec: specName.optional(),
  economy: economyCode.optional(),
  flagged: z.enum(["0", "1", "true", "false"]).optional().transform((v) => v === "1" || v === "true"),
  limit: z.coerce.number().int().min(1).max(1000).default(100),
});

export const FitsQuery = z.object({ spec: specName.optional() });

export const EconomyParams = z.object({ code: economyCode });
export const EconomyPatch = z.strictObject({ name: z.string().trim().min(1, "must not be empty").max(120) });

export const SourcePatch = z
  .strictObject({
    enabled: z.boolean().optional(),
    schedule: z.string().trim().refine((s) => isValidCron(s), "must be a cron expression (minute hour day month weekday)").optional(),
    timezone: z.string().refine(isTimeZone, "must be an IANA time zone, e.g. Europe/Paris").optional(),
  })
  .refine((o) => Object.keys(o).length > 0, "give at least one of enabled, schedule, timezone");

export const AlertsBody = z.strictObject({
  gStarThreshold: z.number().min(0, "must be at least 0").max(0.1, "must be at most 0.1 (10 percentage points)"),
});
