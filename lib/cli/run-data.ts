/** Implementations of the data commands (loaded only when one runs). */
import fs from "node:fs";
import path from "node:path";
import { csvFormat } from "d3-dsv";
import { CONCEPTS, DEFAULT_UNITS, type Concept } from "../ingestion/types";
import { parseSourceDefinition, type SourceDefinition, type SourceDefinitionInput } from "../ingestion/sources";
import { CATALOG, findCatalogSource } from "../ingestion/catalog";
import { PAYLOAD_FORMATS, type PayloadFormat } from "../ingestion/common";
import { importRelease } from "../jobs/import-release";
import { findVintage, listVintages, revisionsBetween, upsertSource } from "../store/vintages";
import { sourceSummaries } from "../store/workspace";
import { cliConfig, openCliStore, progress, UsageError } from "./shared";

interface ImportOptions {
  file: string;
  format: string;
  concept: string;
  source: string;
  vintage: string;
  map?: string;
  layout: string;
  unit?: string;
  scale: string;
  filter: string[];
  economyDimension?: string;
  title?: string;
  released?: string;
  economyMap: string[];
  skipUnknownEconomies?: boolean;
}

function parseFilters(list: readonly string[]): Record<string, string> {
  const out: Record<string, string> = {};
  for (const f of list) {
    const eq = f.indexOf("=");
    if (eq <= 0) throw new UsageError(`--filter ${f}: expected DIMENSION=VALUE`);
    out[f.slice(0, eq)] = f.slice(eq + 1);
  }
  return out;
}

/** The definition an import describes: one query for the file's concept. */
export function importDefinition(o: ImportOptions): { def: SourceDefinition; parserOptions: Record<string, unknown> } {
  if (!(PAYLOAD_FORMATS as readonly string[]).includes(o.format)) throw new UsageError(`--format ${o.format}: expected one of ${PAYLOAD_FORMATS.join(", ")}`);
  if (!(CONCEPTS as readonly string[]).includes(o.concept)) throw new UsageError(`--concept ${o.concept}: expected one of ${CONCEPTS.join(", ")}`);
  const scale = Number(o.scale);
  if (!(scale > 0 && Number.isFinite(scale))) throw new UsageError(`--scale ${o.scale}: expected a positive number`);
  const format = o.format as PayloadFormat;
  const filters = parseFilters(o.filter);
  const parserOptions: Record<string, unknown> = {};
  let economyDimension = o.economyDimension;
  if (format === "csv") {
    if (!o.map) throw new UsageError("--map is required for csv files: economy=COL,period=COL,value=COL[,status=COL]");
    if (o.layout !== "long" && o.layout !== "wide") throw new UsageError(`--layout ${o.layout}: expected long or wide`);
    parserOptions.map = o.map;
    parserOptions.layout = o.layout;
    if (Object.keys(filters).length) parserOptions.dimensions = Object.keys(filters);
    economyDimension ??= /(?:^|,)\s*economy=([^,]+)/.exec(o.map)?.[1]?.trim();
  } else if (o.map) {
    throw new UsageError("--map applies to csv files only");
  }
  economyDimension ??= format === "jsonstat" ? "geo" : format === "worldbank-json" ? "country" : "REF_AREA";
  const input: SourceDefinitionInput = {
    name: o.source,
    title: o.title ?? o.source,
    kind: "file",
    format,
    queries: [{ id: o.concept, concept: o.concept as Concept, unit: o.unit ?? DEFAULT_UNITS[o.concept as Concept], scale, economyDimension, filters }],
    economyCodeMap: parseFilters(o.economyMap ?? []),
    enabled: false,
    notes: `Import-only source created by \`ideafront import\` from ${path.basename(o.file)}.`,
  };
  try {
    return { def: parseSourceDefinition(input), parserOptions };
  } catch (err) {
    throw new UsageError((err as Error).message);
  }
}

export async function runImport(o: ImportOptions): Promise<void> {
  if (!fs.existsSync(o.file)) throw new UsageError(`--file ${o.file}: no such file`);
  if (!o.vintage.trim()) throw new UsageError("--vintage must not be empty");
  if (/^\d{4}-\d{2}-\d{2}$/.test(o.vintage) && Number.isNaN(new Date(`${o.vintage}T00:00:00Z`).getTime())) throw new UsageError(`--vintage ${o.vintage} is not a valid date`);
  const released = o.released ? new Date(o.released) : null;
  if (released && Number.isNaN(released.getTime())) throw new UsageError(`--released ${o.released} is not a date`);
  const { def, parserOptions } = importDefinition(o);
  const store = await openCliStore();
  try {
    progress(`Reading ${o.file} ...`);
    const res = await importRelease(store, {
      def,
      label: o.vintage,
      payloads: [{ body: fs.createReadStream(o.file), name: o.file, parserOptions: { ...parserOptions, locations: true } }],
      releasedAt: released,
      skipUnknownEconomies: o.skipUnknownEconomies ?? false,
      // The source is created (or its import-only definition updated) only for a file that is clean.
      beforeCommit: async () => {
        const existing = await store.prisma.source.findUnique({ where: { name: def.name } });
        if (!existing || (existing.kind === "file" && !(existing.config as { baseUrl?: string }).baseUrl)) {
          await upsertSource(store, { name: def.name, title: existing?.title ?? def.title, kind: def.kind, format: def.format, config: def });
        }
      },
    });
    for (const n of res.prepared.notes) progress(`note: ${n}`);
    for (const w of res.warnings) progress(`warning: ${w}`);
    if (res.status === "unchanged") {
      console.log(`Unchanged: the file equals vintage ${res.vintage.seq} (${res.vintage.label}) of ${def.name}; nothing stored.`);
    } else {
      console.log(`Stored vintage ${res.vintage.seq} (${res.vintage.label}) of ${def.name}: ${res.counts.observations} values.`);
      await refitIfInput(store, def.name);
    }
    console.log(`added=${res.counts.added} revised=${res.counts.revised} removed=${res.counts.removed}`);
  } finally {
    await store.close();
  }
}

async function refitIfInput(store: Awaited<ReturnType<typeof openCliStore>>, source: string): Promise<void> {
  const { getModelInputs, inputSources } = await import("../store/panel");
  const inputs = await getModelInputs(store);
  if (!inputs || !inputSources(inputs).includes(source)) return;
  const { refitAll } = await import("../jobs/refit");
  await refitAll(store, { onProgress: (l) => progress(`refit ${l}`) });
}

export async function runRevisions(o: { source: string; from: string; to: string; concept?: string; csv?: string }): Promise<void> {
  const store = await openCliStore();
  try {
    const src = await store.prisma.source.findUnique({ where: { name: o.source } });
    if (!src) throw new UsageError(`--source ${o.source}: no such source`);
    const from = await findVintage(store, o.source, o.from);
    const to = await findVintage(store, o.source, o.to);
    const labels = async () => (await listVintages(store, o.source)).map((v) => v.label).join(", ");
    if (!from) throw new UsageError(`--from ${o.from}: ${o.source} has no such vintage (it has: ${await labels()})`);
    if (!to) throw new UsageError(`--to ${o.to}: ${o.source} has no such vintage (it has: ${await labels()})`);
    const revs = await revisionsBetween(store, { source: o.source, fromSeq: from.seq, toSeq: to.seq, concepts: o.concept ? [o.concept] : undefined });
    const counts = { added: 0, revised: 0, removed: 0 };
    for (const r of revs) counts[r.kind]++;
    if (o.csv) {
      fs.writeFileSync(
        o.csv,
        `${csvFormat(
          revs.map((r) => ({ economy: r.economy, concept: r.concept, unit: r.unit, period: r.period, kind: r.kind, old_value: r.oldValue, new_value: r.newValue, old_status: r.oldStatus, new_status: r.newStatus })),
          ["economy", "concept", "unit", "period", "kind", "old_value", "new_value", "old_status", "new_status"],
        )}\n`,
      );
      progress(`Wrote ${revs.length} rows to ${o.csv}`);
    }
    const economies = new Set(revs.map((r) => r.economy)).size;
    console.log(`${o.source}: ${o.from} (vintage ${from.seq}) -> ${o.to} (vintage ${to.seq})${o.concept ? `, ${o.concept}` : ""}: ${revs.length} changed values in ${economies} economies`);
    console.log(`added=${counts.added} revised=${counts.revised} removed=${counts.removed}`);
  } finally {
    await store.close();
  }
}

export async function runFetch(o: { source?: string; refit: boolean }): Promise<void> {
  const store = await openCliStore();
  try {
    const { fetchJob } = await import("../jobs/scheduler");
    const { runJob } = await import("../jobs/runner");
    const rows = o.source ? await store.prisma.source.findMany({ where: { name: o.source } }) : await store.prisma.source.findMany({ where: { enabled: true } });
    if (o.source && !rows.length) throw new UsageError(`--source ${o.source}: no such source`);
    if (!rows.length) console.log("No enabled sources: enable one with `ideafront sources enable <name>`.");
    let failed = 0;
    for (const s of rows) {
      const cfg = await cliConfig();
      const r = await runJob(store, fetchJob(s, { demoPassword: cfg.demoPassword, refit: o.refit }), { tick: new Date(), trigger: "manual", instance: cfg.instance });
      if (r.status === "failed") {
        failed++;
        console.log(`${s.name}: failed: ${r.error}`);
      } else {
        const d = r.outcome?.details as { status?: string; vintage?: { seq: number; label: string } | null } | undefined;
        const c = r.outcome?.counts ?? {};
        console.log(`${s.name}: ${d?.status ?? r.status}${d?.vintage ? ` (vintage ${d.vintage.seq}, ${d.vintage.label})` : ""} added=${c.added ?? 0} revised=${c.revised ?? 0} removed=${c.removed ?? 0}`);
      }
    }
    if (failed) process.exitCode = 1;
  } finally {
    await store.close();
  }
}

export async function runSourcesList(): Promise<void> {
  const store = await openCliStore();
  try {
    const rows = await sourceSummaries(store);
    if (!rows.length) console.log("No sources yet.");
    for (const s of rows) {
      console.log(`${s.name}\t${s.enabled ? "enabled" : "disabled"}\t${s.kind}/${s.format}\t${s.vintages} vintages${s.latest ? `, latest ${s.latest.label}` : ""}\t${s.title}`);
    }
  } finally {
    await store.close();
  }
}

export function runSourcesCatalog(): void {
  for (const d of CATALOG) console.log(`${d.name}\t${d.kind}/${d.format}\t${d.title}${d.unverified.length ? `\t(unverified: ${d.unverified.length} items)` : ""}`);
}

export async function runSourcesAdd(o: { catalog?: string; definition?: string }): Promise<void> {
  if (!!o.catalog === !!o.definition) throw new UsageError("give exactly one of --catalog NAME or --definition FILE");
  let def: SourceDefinition;
  if (o.catalog) {
    const found = findCatalogSource(o.catalog);
    if (!found) throw new UsageError(`--catalog ${o.catalog}: not in the catalog (see \`ideafront sources catalog\`)`);
    def = found;
  } else {
    let raw: unknown;
    try {
      raw = JSON.parse(fs.readFileSync(o.definition!, "utf8"));
    } catch (err) {
      throw new UsageError(`--definition ${o.definition}: ${(err as Error).message}`);
    }
    try {
      def = parseSourceDefinition(raw);
    } catch (err) {
      throw new UsageError(`--definition ${o.definition}: ${(err as Error).message}`);
    }
  }
  const store = await openCliStore();
  try {
    await upsertSource(store, { name: def.name, title: def.title, kind: def.kind, format: def.format, config: def, enabled: def.enabled, schedule: def.schedule, timezone: def.timezone });
    console.log(`Source ${def.name} saved (${def.enabled ? "enabled" : "disabled"}).`);
  } finally {
    await store.close();
  }
}

export async function runSourcesEnable(name: string, enabled: boolean): Promise<void> {
  const store = await openCliStore();
  try {
    const { updateSourceSettings } = await import("../store/sources");
    await updateSourceSettings(store, name, { enabled });
    console.log(`Source ${name} ${enabled ? "enabled" : "disabled"}; running servers and workers pick this up within a minute.`);
  } finally {
    await store.close();
  }
}
