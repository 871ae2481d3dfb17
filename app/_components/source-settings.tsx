"use client";
import { useState } from "react";
import { useRouter } from "next/navigation";

export interface SourceRow {
  name: string;
  title: string;
  enabled: boolean;
  schedule: string;
  timezone: string;
  isDemo: boolean;
  vintages: number;
  latest: string | null;
}

async function patch(name: string, body: object): Promise<string | null> {
  const r = await fetch(`/api/sources/${name}`, { method: "PATCH", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
  return r.ok ? null : ((await r.json()).error?.message ?? `HTTP ${r.status}`);
}

/** A source's schedule and switch; editable by editors. */
export function SourceSettings({ source, canEdit }: { source: SourceRow; canEdit: boolean }) {
  const router = useRouter();
  const [schedule, setSchedule] = useState(source.schedule);
  const [timezone, setTimezone] = useState(source.timezone);
  const [error, setError] = useState<string | null>(null);
  const save = async (body: object) => {
    setError(null);
    const e = await patch(source.name, body);
    if (e) setError(e);
    else router.refresh();
  };
  return (
    <tr data-testid={`source-${source.name}`}>
      <td>
        <strong>{source.title}</strong> {source.isDemo && <span className="tag warn">invented demo source</span>}
        <div className="muted">
          {source.name} · {source.vintages} vintages{source.latest ? ` · latest ${source.latest}` : ""}
        </div>
      </td>
      <td>{source.enabled ? <span className="tag">scheduled</span> : <span className="tag bad">off</span>}</td>
      <td>
        {canEdit ? (
          <form
            className="inline-form"
            onSubmit={(e) => {
              e.preventDefault();
              void save({ schedule, timezone });
            }}
          >
            <input aria-label={`schedule of ${source.name}`} value={schedule} onChange={(e) => setSchedule(e.target.value)} size={14} />
            <input aria-label={`time zone of ${source.name}`} value={timezone} onChange={(e) => setTimezone(e.target.value)} size={16} />
            <button type="submit" className="quiet" disabled={schedule === source.schedule && timezone === source.timezone}>
              Save
            </button>
          </form>
        ) : (
          `${source.schedule} (${source.timezone})`
        )}
        {error && <div className="error">{error}</div>}
      </td>
      <td>
        {canEdit && (
          <button className="quiet" onClick={() => void save({ enabled: !source.enabled })}>
            {source.enabled ? "Switch off" : "Switch on"}
          </button>
        )}
      </td>
    </tr>
  );
}

/** The team's alert threshold for g* moves. */
export function AlertThreshold({ value, canEdit }: { value: number; canEdit: boolean }) {
  const router = useRouter();
  const [pp, setPp] = useState(String(+(value * 100).toFixed(4)));
  const [error, setError] = useState<string | null>(null);
  if (!canEdit) return <p>Alert when g* moves by at least {(value * 100).toFixed(2)} percentage points.</p>;
  return (
    <form
      className="inline-form"
      onSubmit={async (e) => {
        e.preventDefault();
        setError(null);
        const r = await fetch("/api/settings/alerts", { method: "PUT", headers: { "content-type": "application/json" }, body: JSON.stringify({ gStarThreshold: Number(pp) / 100 }) });
        if (!r.ok) setError((await r.json()).error?.message ?? `HTTP ${r.status}`);
        else router.refresh();
      }}
    >
      <label htmlFor="threshold">Alert when g* moves by at least</label>
      <input id="threshold" value={pp} onChange={(e) => setPp(e.target.value)} size={6} inputMode="decimal" />
      <span>percentage points</span>
      <button type="submit" className="quiet">
        Save
      </button>
      {error && <span className="error">{error}</span>}
    </form>
  );
}
