/**
 * The invented demo workspace: a demo statistics office (a built-in local source serving SDMX-CSV
 * 1.0) whose eight quarterly releases enter through the same import path as real data, plus demo
 * accounts. Idempotent: releases already stored are not imported again.
 */
import type { Store } from "../store/db";
import { upsertSource, listVintages } from "../store/vintages";
import { getSetting, putSetting } from "../store/settings";
import { upsertUser, type Role } from "../store/users";
import { parseSourceDefinition, type SourceDefinition } from "../ingestion/sources";
import { DEMO_SOURCE, DEMO_VINTAGE_COUNT, demoParameters, demoReleaseSdmxCsv } from "../demo/scenario";
import { importRelease } from "./import-release";
import { getModelInputs, setModelInputs } from "../store/panel";
import { refitAll } from "./refit";

export const DEMO_ACCOUNTS: readonly { email: string; name: string; role: Role }[] = [
  { email: "editor@demo.ideafront.test", name: "Demo editor", role: "EDITOR" },
  { email: "viewer@demo.ideafront.test", name: "Demo viewer", role: "VIEWER" },
  { email: "admin@demo.ideafront.test", name: "Demo administrator", role: "ADMIN" },
];

/** The demo source's definition: configured like any other source. */
export function demoSourceDefinition(): SourceDefinition {
  return parseSourceDefinition({
    name: DEMO_SOURCE,
    title: "Demo Statistics Office (invented)",
    kind: "demo",
    format: "sdmx-csv",
    queries: [
      { id: "RES_FTE", concept: "researchers_fte", unit: "{UNIT_MEASURE}", economyDimension: "REF_AREA", filters: { MEASURE: "RES_FTE" } },
      { id: "POP", concept: "population", unit: "{UNIT_MEASURE}", economyDimension: "REF_AREA", filters: { MEASURE: "POP" } },
      { id: "TFP", concept: "tfp_index", unit: "{UNIT_MEASURE}", economyDimension: "REF_AREA", filters: { MEASURE: "TFP" } },
    ],
    enabled: true,
    schedule: "0 6 * * *",
    timezone: "UTC",
    notes: "Invented data for trying the tool: fictional economies, simulated from stated parameters (lib/demo/parameters.json).",
  });
}

export interface DemoLoadResult {
  imported: string[];
  alreadyStored: number;
}

/**
 * Make sure the demo workspace is complete. `onProgress` receives one line per release.
 * The demo release i is served as the SDMX-CSV file the demo office would publish on its date.
 */
export async function ensureDemoWorkspace(store: Store, opts: { password: string; onProgress?: (line: string) => void; refit?: boolean }): Promise<DemoLoadResult> {
  const def = demoSourceDefinition();
  await upsertSource(store, { name: def.name, title: def.title, kind: def.kind, format: def.format, config: def, enabled: def.enabled, schedule: def.schedule, timezone: def.timezone, isDemo: true });
  const stored = new Set((await listVintages(store, def.name)).map((v) => v.label));
  const names = Object.fromEntries(demoParameters.economies.map((e) => [e.code, `${e.name}`]));
  const declared = demoParameters.economies.map((e) => e.code);
  if (!(await getModelInputs(store))) {
    await setModelInputs(store, {
      researchers: { source: def.name, concept: "researchers_fte" },
      tfp: { source: def.name, concept: "tfp_index" },
      population: { source: def.name, concept: "population" },
    });
  }
  const imported: string[] = [];
  for (let i = 0; i < DEMO_VINTAGE_COUNT; i++) {
    const label = demoParameters.vintages[i]!.label;
    if (stored.has(label)) continue;
    const res = await importRelease(store, {
      def,
      label,
      payloads: [{ body: demoReleaseSdmxCsv(i), name: `demo-release-${label}.csv` }],
      economyNames: names,
      declaredEconomies: declared,
      isDemo: true,
      releasedAt: new Date(`${label}T09:00:00Z`),
      fetchedAt: new Date(`${label}T09:05:00Z`),
    });
    imported.push(label);
    opts.onProgress?.(`demo release ${label}: ${res.counts.added} added, ${res.counts.revised} revised, ${res.counts.removed} removed`);
    // Keep each vintage's estimate: refit the active specs as of this release.
    if (opts.refit !== false) await refitAll(store, { onProgress: (l) => opts.onProgress?.(`  refit ${l}`) });
  }
  for (const a of DEMO_ACCOUNTS) {
    const existing = await store.prisma.user.findUnique({ where: { email: a.email } });
    if (!existing) await upsertUser(store, { ...a, password: opts.password });
  }
  const before = await getSetting(store, "demo");
  if (imported.length || !before) await putSetting(store, "demo", { loadedAt: new Date().toISOString(), vintages: DEMO_VINTAGE_COUNT });
  return { imported, alreadyStored: stored.size };
}
