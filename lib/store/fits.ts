/**
 * Model specs and fit sets in the store. A fit set is one run of one spec over the panel as of
 * given vintages; it is written in one transaction with all its economies' fits, never half.
 */
import { NAMED_KPF_SPECS, type KpfSpec } from "../estimation/kpf-spec";
import type { KpfEconomyResult } from "../estimation/kpf-estimate";
import type { Store } from "./db";
import type { AsOf } from "./panel";
import type { FitChangeRow } from "../jobs/changes";

/** Built-in specs: the team default (headline) and the single-economy reference (diagnostic). */
export async function ensureBuiltinSpecs(store: Store): Promise<void> {
  for (const [name, spec] of Object.entries(NAMED_KPF_SPECS)) {
    const existing = await store.prisma.modelSpec.findUnique({ where: { name } });
    if (existing) {
      if (existing.builtin) await store.prisma.modelSpec.update({ where: { name }, data: { spec: spec as object, description: spec.description } });
      continue;
    }
    await store.prisma.modelSpec.create({
      data: {
        name,
        description: spec.description,
        spec: spec as object,
        builtin: true,
        isDefault: name === "team-default",
        active: name === "team-default" || name === "reference",
      },
    });
  }
}

export interface StoredSpec {
  id: number;
  name: string;
  description: string;
  spec: KpfSpec;
  active: boolean;
  isDefault: boolean;
  builtin: boolean;
}

export async function listSpecs(store: Store, opts: { activeOnly?: boolean } = {}): Promise<StoredSpec[]> {
  const rows = await store.prisma.modelSpec.findMany({ where: opts.activeOnly ? { active: true } : {}, orderBy: [{ isDefault: "desc" }, { name: "asc" }] });
  return rows.map((r) => ({ id: r.id, name: r.name, description: r.description, spec: r.spec as unknown as KpfSpec, active: r.active, isDefault: r.isDefault, builtin: r.builtin }));
}

export function asOfLabel(asOf: AsOf): string {
  return Object.entries(asOf)
    .sort(([a], [b]) => (a < b ? -1 : 1))
    .map(([source, v]) => `${source} ${v.label}`)
    .join(" · ");
}

export interface FitSetInput {
  specId: number;
  asOf: AsOf;
  dataHash: string;
  codeVersion: string;
  results: readonly KpfEconomyResult[];
  /** Per-economy input hash (so the next run knows what changed). */
  economyHashes: Readonly<Record<string, string>>;
  summary?: Record<string, unknown>;
  warnings?: readonly string[];
  jobRunId?: number | null;
  /** What moved since `previousFitSetId`, written in the same transaction. */
  changes?: readonly FitChangeRow[];
  previousFitSetId?: number | null;
}

const finite = (x: number | null | undefined): number | null => (x === null || x === undefined || !Number.isFinite(x) ? null : x);

/** Store a fit set and all its fits in one transaction; returns its id. */
export async function saveFitSet(store: Store, input: FitSetInput): Promise<number> {
  return store.transaction(async (tx) => {
    const set = await tx.query<{ id: number }>(
      `INSERT INTO fit_set (spec_id, as_of, as_of_label, data_hash, code_version, summary, warnings, job_run_id)
       VALUES ($1, $2::jsonb, $3, $4, $5, $6::jsonb, $7::jsonb, $8) RETURNING id`,
      [input.specId, JSON.stringify(input.asOf), asOfLabel(input.asOf), input.dataHash, input.codeVersion, JSON.stringify(input.summary ?? null), JSON.stringify(input.warnings ?? []), input.jobRunId ?? null],
    );
    const id = set.rows[0]!.id;
    const rs = input.results;
    if (rs.length) {
      await tx.query(
        `INSERT INTO fit (fit_set_id, economy_code, nobs, gamma, theta, log_b, se_gamma, se_theta, n, g_star, g_star_lo, g_star_hi, p_theta_ge_1, regime, details, warnings, data_hash)
         SELECT $1::int, e, nobs, g, th, lb, sg, st, n, gs, lo, hi, p, reg, d::jsonb, w::jsonb, h
           FROM unnest($2::text[], $3::int[], $4::float8[], $5::float8[], $6::float8[], $7::float8[], $8::float8[], $9::float8[], $10::float8[], $11::float8[], $12::float8[], $13::float8[], $14::text[], $15::text[], $16::text[], $17::text[])
             AS t(e, nobs, g, th, lb, sg, st, n, gs, lo, hi, p, reg, d, w, h)`,
        [
          id,
          rs.map((r) => r.economy),
          rs.map((r) => r.nobs),
          rs.map((r) => finite(r.gamma)),
          rs.map((r) => finite(r.theta)),
          rs.map((r) => finite(r.logB)),
          rs.map((r) => finite(r.seGamma)),
          rs.map((r) => finite(r.seTheta)),
          rs.map((r) => finite(r.n)),
          rs.map((r) => finite(r.gStar)),
          rs.map((r) => (r.gStarLo === -Infinity ? null : finite(r.gStarLo))),
          rs.map((r) => (r.gStarHi === Infinity ? null : finite(r.gStarHi))),
          rs.map((r) => finite(r.pThetaGe1)),
          rs.map((r) => r.regime),
          rs.map((r) => JSON.stringify(r.details, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? String(v) : v))),
          rs.map((r) => JSON.stringify(r.warnings)),
          rs.map((r) => input.economyHashes[r.economy] ?? input.dataHash),
        ],
      );
    }
    for (const c of input.changes ?? []) {
      await tx.query(
        `INSERT INTO fit_change (spec_id, economy_code, from_fit_set_id, to_fit_set_id, g_star_from, g_star_to, g_star_old_sample, revision_effect, new_data_effect,
                                 regime_from, regime_to, interval_from, interval_to, new_years, revised_values, flagged, reasons)
         VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12::jsonb, $13::jsonb, $14::jsonb, $15, $16, $17::jsonb)`,
        [
          input.specId,
          c.economy,
          input.previousFitSetId ?? null,
          id,
          finite(c.gStarFrom),
          finite(c.gStarTo),
          finite(c.gStarOldSample),
          finite(c.revisionEffect),
          finite(c.newDataEffect),
          c.regimeFrom,
          c.regimeTo,
          JSON.stringify(c.intervalFrom),
          JSON.stringify(c.intervalTo),
          JSON.stringify(c.newYears),
          c.revisedValues,
          c.flagged,
          JSON.stringify(c.reasons),
        ],
      );
    }
    return id;
  });
}

export interface FitSetInfo {
  id: number;
  specId: number;
  specName: string;
  asOf: AsOf;
  asOfLabel: string;
  dataHash: string;
  codeVersion: string;
  createdAt: Date;
  summary: Record<string, unknown> | null;
}

function toInfo(r: { id: number; specId: number; asOf: unknown; asOfLabel: string; dataHash: string; codeVersion: string; createdAt: Date; summary: unknown; spec: { name: string } }): FitSetInfo {
  return { id: r.id, specId: r.specId, specName: r.spec.name, asOf: r.asOf as AsOf, asOfLabel: r.asOfLabel, dataHash: r.dataHash, codeVersion: r.codeVersion, createdAt: r.createdAt, summary: (r.summary as Record<string, unknown>) ?? null };
}

/** The newest fit set of a spec, or null. */
export async function latestFitSet(store: Store, specId: number): Promise<FitSetInfo | null> {
  const r = await store.prisma.fitSet.findFirst({ where: { specId }, orderBy: { id: "desc" }, include: { spec: { select: { name: true } } } });
  return r ? toInfo(r) : null;
}

/** All fit sets of a spec, oldest first. */
export async function fitSetHistory(store: Store, specId: number): Promise<FitSetInfo[]> {
  const rows = await store.prisma.fitSet.findMany({ where: { specId }, orderBy: { id: "asc" }, include: { spec: { select: { name: true } } } });
  return rows.map(toInfo);
}

export interface StoredFit {
  fitSetId: number;
  economy: string;
  economyName: string;
  nobs: number;
  gamma: number | null;
  theta: number | null;
  logB: number | null;
  seGamma: number | null;
  seTheta: number | null;
  n: number | null;
  gStar: number | null;
  gStarLo: number | null;
  gStarHi: number | null;
  pThetaGe1: number | null;
  regime: string | null;
  warnings: string[];
  details: Record<string, unknown> | null;
  dataHash: string;
}

export async function fitsOfSet(store: Store, fitSetId: number, opts: { economy?: string } = {}): Promise<StoredFit[]> {
  const rows = await store.prisma.fit.findMany({
    where: { fitSetId, ...(opts.economy ? { economyCode: opts.economy } : {}) },
    include: { economy: { select: { name: true } } },
    orderBy: { economyCode: "asc" },
  });
  return rows.map((f) => ({
    fitSetId: f.fitSetId,
    economy: f.economyCode,
    economyName: f.economy.name,
    nobs: f.nobs,
    gamma: f.gamma,
    theta: f.theta,
    logB: f.logB,
    seGamma: f.seGamma,
    seTheta: f.seTheta,
    n: f.n,
    gStar: f.gStar,
    gStarLo: f.gStarLo,
    gStarHi: f.gStarHi,
    pThetaGe1: f.pThetaGe1,
    regime: f.regime,
    warnings: (f.warnings as string[]) ?? [],
    details: (f.details as Record<string, unknown>) ?? null,
    dataHash: f.dataHash,
  }));
}

export interface AlertSettings {
  /** Move of g* (growth-rate units; 0.001 = 0.1 percentage points) that puts an economy in the alert feed. */
  gStarThreshold: number;
}
export const DEFAULT_ALERTS: AlertSettings = { gStarThreshold: 0.001 };

export async function getAlertSettings(store: Store): Promise<AlertSettings> {
  const row = await store.prisma.setting.findUnique({ where: { key: "alerts" } });
  const v = row?.value as Partial<AlertSettings> | undefined;
  return { gStarThreshold: typeof v?.gStarThreshold === "number" && v.gStarThreshold >= 0 ? v.gStarThreshold : DEFAULT_ALERTS.gStarThreshold };
}

export async function setAlertSettings(store: Store, a: AlertSettings): Promise<void> {
  await store.prisma.setting.upsert({ where: { key: "alerts" }, create: { key: "alerts", value: a as object }, update: { value: a as object } });
}

export interface ChangeFeedItem {
  id: number;
  spec: string;
  economy: string;
  economyName: string;
  isDemo: boolean;
  fromLabel: string | null;
  toLabel: string;
  gStarFrom: number | null;
  gStarTo: number | null;
  revisionEffect: number | null;
  newDataEffect: number | null;
  regimeFrom: string | null;
  regimeTo: string | null;
  newYears: number[];
  revisedValues: number;
  flagged: boolean;
  reasons: string[];
  createdAt: Date;
}

/** The change feed, newest first. */
export async function changeFeed(
  store: Store,
  opts: { spec?: string; economy?: string; flaggedOnly?: boolean; limit?: number; toFitSetId?: number } = {},
): Promise<ChangeFeedItem[]> {
  const rows = await store.prisma.fitChange.findMany({
    where: {
      ...(opts.spec ? { spec: { name: opts.spec } } : {}),
      ...(opts.economy ? { economyCode: opts.economy } : {}),
      ...(opts.flaggedOnly ? { flagged: true } : {}),
      ...(opts.toFitSetId !== undefined ? { toFitSetId: opts.toFitSetId } : {}),
    },
    include: { spec: { select: { name: true } }, economy: { select: { name: true, isDemo: true } }, from: { select: { asOfLabel: true } }, to: { select: { asOfLabel: true } } },
    orderBy: [{ toFitSetId: "desc" }, { economyCode: "asc" }],
    take: Math.min(opts.limit ?? 100, 1000),
  });
  return rows.map((r) => ({
    id: r.id,
    spec: r.spec.name,
    economy: r.economyCode,
    economyName: r.economy.name,
    isDemo: r.economy.isDemo,
    fromLabel: r.from?.asOfLabel ?? null,
    toLabel: r.to.asOfLabel,
    gStarFrom: r.gStarFrom,
    gStarTo: r.gStarTo,
    revisionEffect: r.revisionEffect,
    newDataEffect: r.newDataEffect,
    regimeFrom: r.regimeFrom,
    regimeTo: r.regimeTo,
    newYears: (r.newYears as number[]) ?? [],
    revisedValues: r.revisedValues,
    flagged: r.flagged,
    reasons: (r.reasons as string[]) ?? [],
    createdAt: r.createdAt,
  }));
}

export interface HistoryPoint {
  fitSetId: number;
  asOfLabel: string;
  /** The vintage label of the first input source (the demo has one source). */
  vintage: string;
  createdAt: Date;
  gStar: number | null;
  gStarLo: number | null;
  gStarHi: number | null;
  theta: number | null;
  seTheta: number | null;
  gamma: number | null;
  n: number | null;
  nobs: number;
  regime: string | null;
  warnings: string[];
}

/** One economy's estimate under one spec across all its fit sets (the parameter history), oldest first. */
export async function economyHistory(store: Store, economy: string, specId: number): Promise<HistoryPoint[]> {
  const rows = await store.prisma.fit.findMany({
    where: { economyCode: economy, fitSet: { specId } },
    include: { fitSet: { select: { asOf: true, asOfLabel: true, createdAt: true } } },
    orderBy: { fitSetId: "asc" },
  });
  return rows.map((f) => {
    const asOf = f.fitSet.asOf as AsOf;
    const first = Object.values(asOf)[0];
    return {
      fitSetId: f.fitSetId,
      asOfLabel: f.fitSet.asOfLabel,
      vintage: first?.label ?? f.fitSet.asOfLabel,
      createdAt: f.fitSet.createdAt,
      gStar: f.gStar,
      gStarLo: f.gStarLo,
      gStarHi: f.gStarHi,
      theta: f.theta,
      seTheta: f.seTheta,
      gamma: f.gamma,
      n: f.n,
      nobs: f.nobs,
      regime: f.regime,
      warnings: (f.warnings as string[]) ?? [],
    };
  });
}
