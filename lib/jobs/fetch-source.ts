/**
 * Fetch one source and store what is new as a vintage. A failed fetch leaves the previous vintage
 * current (nothing is written) and the next scheduled run tries again.
 */
import type { Store } from "../store/db";
import { parseSourceDefinition, type SourceDefinition } from "../ingestion/sources";
import { fetchRelease, type FetchReleaseOptions } from "../ingestion/connectors";
import { ensureDemoWorkspace } from "./demo";
import { importRelease } from "./import-release";

export interface FetchSourceResult {
  source: string;
  status: "new-vintage" | "unchanged" | "not-modified";
  vintage?: { seq: number; label: string };
  counts: { added: number; revised: number; removed: number; observations: number };
}

/** Load a stored source's definition (validated again: the config may predate a schema change). */
export async function loadDefinition(store: Store, name: string): Promise<{ def: SourceDefinition; fetchState: FetchState | null }> {
  const row = await store.prisma.source.findUniqueOrThrow({ where: { name } });
  return { def: parseSourceDefinition(row.config), fetchState: (row.fetchState as FetchState | null) ?? null };
}

interface FetchState {
  validators?: Record<string, { etag?: string | null; lastModified?: string | null }>;
  lastFetchAt?: string;
}

const zero = { added: 0, revised: 0, removed: 0, observations: 0 };

export async function fetchSource(
  store: Store,
  name: string,
  opts: { now?: Date; demoPassword?: string; fetchOptions?: Omit<FetchReleaseOptions, "previous"> } = {},
): Promise<FetchSourceResult> {
  const now = opts.now ?? new Date();
  const { def, fetchState } = await loadDefinition(store, name);
  if (def.kind === "demo") {
    const r = await ensureDemoWorkspace(store, { password: opts.demoPassword ?? "ideafront-demo" });
    return { source: name, status: r.imported.length ? "new-vintage" : "unchanged", counts: zero };
  }
  let fetched = await fetchRelease(def, { ...opts.fetchOptions, previous: fetchState?.validators ?? {} });
  if (fetched.allNotModified) {
    await saveFetchState(store, name, { validators: fetchState?.validators ?? {}, lastFetchAt: now.toISOString() });
    return { source: name, status: "not-modified", counts: zero };
  }
  if (fetched.payloads.some((p) => p.notModified)) {
    // Part of the release answered 304: a vintage is the whole release, so fetch all of it.
    fetched = await fetchRelease(def, { ...opts.fetchOptions, previous: {} });
  }
  const label = await freeLabel(store, name, now.toISOString().slice(0, 10), now);
  const res = await importRelease(store, {
    def,
    label,
    payloads: fetched.payloads.map((p) => ({ body: p.body, name: p.url, query: p.query })),
    fetchedAt: now,
  });
  await saveFetchState(store, name, { validators: fetched.validators as FetchState["validators"], lastFetchAt: now.toISOString() });
  return {
    source: name,
    status: res.status === "created" ? "new-vintage" : "unchanged",
    vintage: { seq: res.vintage.seq, label: res.vintage.label },
    counts: { added: res.counts.added, revised: res.counts.revised, removed: res.counts.removed, observations: res.counts.observations },
  };
}

/** The day's date, or the date and time when a vintage already carries that day's label. */
async function freeLabel(store: Store, source: string, day: string, now: Date): Promise<string> {
  const taken = await store.prisma.vintage.findFirst({ where: { source: { name: source }, label: day } });
  return taken ? now.toISOString().slice(0, 19).replace("T", " ") : day;
}

async function saveFetchState(store: Store, name: string, state: FetchState): Promise<void> {
  await store.prisma.source.update({ where: { name }, data: { fetchState: state as object } });
}
