"use client";
import { useQuery } from "@tanstack/react-query";
import { Bar, BarChart, CartesianGrid, Legend, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";

interface VintageRow {
  label: string;
  addedCount: number;
  revisedCount: number;
  removedCount: number;
}

/** Stacked bars: values added, revised and removed by each release of a source. */
export function ReleaseHistory({ source }: { source: string }) {
  const q = useQuery({
    queryKey: ["vintages", source],
    queryFn: async () => {
      const r = await fetch(`/api/sources/${encodeURIComponent(source)}/vintages`);
      if (!r.ok) throw new Error((await r.json()).error?.message ?? `HTTP ${r.status}`);
      return (await r.json()) as { vintages: VintageRow[] };
    },
  });
  if (q.isPending) return <p className="muted">Loading release history…</p>;
  if (q.isError) return <p className="error">Release history unavailable: {q.error.message}</p>;
  const data = q.data.vintages.map((v) => ({ label: v.label, added: v.addedCount, revised: v.revisedCount, removed: v.removedCount }));
  return (
    <div style={{ width: "100%", height: 260 }} data-testid={`release-history-${source}`}>
      <ResponsiveContainer>
        <BarChart data={data} margin={{ top: 8, right: 16, bottom: 8, left: 8 }}>
          <CartesianGrid strokeDasharray="3 3" stroke="#e4e1d8" />
          <XAxis dataKey="label" tick={{ fontSize: 12 }} />
          <YAxis tick={{ fontSize: 12 }} />
          <Tooltip />
          <Legend />
          <Bar dataKey="added" stackId="a" fill="var(--added)" name="values added" />
          <Bar dataKey="revised" stackId="a" fill="var(--revised)" name="values revised" />
          <Bar dataKey="removed" stackId="a" fill="var(--removed)" name="values removed" />
        </BarChart>
      </ResponsiveContainer>
    </div>
  );
}
