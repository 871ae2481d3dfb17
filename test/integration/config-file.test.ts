/** The optional configuration file sets source schedules and the alert threshold, and names bad fields. */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { applyConfigFile } from "@/lib/store/config-file";
import { getAlertSettings } from "@/lib/store/fits";
import { upsertSource } from "@/lib/store/vintages";
import { parseSourceDefinition } from "@/lib/ingestion/sources";
import { storeTargets } from "./support/stores";

function writeConfig(content: unknown): string {
  const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "ideafront-config-")), "ideafront.config.json");
  fs.writeFileSync(file, typeof content === "string" ? content : JSON.stringify(content));
  return file;
}

for (const target of storeTargets()) {
  describe(`configuration file (${target.kind})`, () => {
    afterAll(() => target.cleanup());

    it("applies schedules, time zones, switches and the alert threshold", async () => {
      const store = await target.open();
      const def = parseSourceDefinition({ name: "wdi-researchers", title: "t", kind: "file", format: "csv", queries: [{ concept: "researchers_per_million", unit: "per million people", economyDimension: "Country Code", id: "R" }] });
      await upsertSource(store, { name: def.name, title: def.title, kind: def.kind, format: def.format, config: def });
      const file = writeConfig({ sources: { "wdi-researchers": { schedule: "30 5 * * 1-5", timezone: "Europe/Paris", enabled: true } }, alerts: { gStarThreshold: 0.0025 } });
      const lines = await applyConfigFile(store, { IDEAFRONT_CONFIG: file } as unknown as NodeJS.ProcessEnv);
      expect(lines).toEqual(["source wdi-researchers: schedule 30 5 * * 1-5, timezone Europe/Paris, enabled true", "alert threshold 0.0025"]);
      const row = await store.prisma.source.findUniqueOrThrow({ where: { name: "wdi-researchers" } });
      expect(row).toMatchObject({ schedule: "30 5 * * 1-5", timezone: "Europe/Paris", enabled: true });
      expect(await getAlertSettings(store)).toEqual({ gStarThreshold: 0.0025 });

      const bad = async (content: unknown) => applyConfigFile(store, { IDEAFRONT_CONFIG: writeConfig(content) } as unknown as NodeJS.ProcessEnv);
      await expect(bad({ sources: { "wdi-researchers": { schedule: "daily" } } })).rejects.toThrow(/field sources\.wdi-researchers\.schedule: must be a cron expression/);
      await expect(bad({ sources: { "wdi-researchers": { timezone: "Mars/Olympus" } } })).rejects.toThrow(/field sources\.wdi-researchers\.timezone: must be an IANA time zone/);
      await expect(bad({ sources: { "no-such": { enabled: true } } })).rejects.toThrow(/field sources\.no-such: no source of that name/);
      await expect(bad("{ not json")).rejects.toThrow(/is not valid JSON/);
      await expect(applyConfigFile(store, { IDEAFRONT_CONFIG: "/nonexistent/ideafront.json" } as unknown as NodeJS.ProcessEnv)).rejects.toThrow(/IDEAFRONT_CONFIG .* does not exist/);
      await store.close();
    });
  });
}
