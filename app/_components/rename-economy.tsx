"use client";
import { useState } from "react";
import { useRouter } from "next/navigation";

/** Editors can correct an economy's display name. */
export function RenameEconomy({ code, name }: { code: string; name: string }) {
  const router = useRouter();
  const [value, setValue] = useState(name);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  return (
    <form
      className="inline-form"
      onSubmit={async (e) => {
        e.preventDefault();
        setBusy(true);
        setError(null);
        const r = await fetch(`/api/economies/${code}`, { method: "PATCH", headers: { "content-type": "application/json" }, body: JSON.stringify({ name: value }) });
        setBusy(false);
        if (!r.ok) setError((await r.json()).error?.message ?? `HTTP ${r.status}`);
        else router.refresh();
      }}
    >
      <label className="muted" htmlFor="economy-name">
        Display name
      </label>
      <input id="economy-name" value={value} onChange={(e) => setValue(e.target.value)} maxLength={120} />
      <button type="submit" className="quiet" disabled={busy || value.trim() === name}>
        Rename
      </button>
      {error && <span className="error">{error}</span>}
    </form>
  );
}
