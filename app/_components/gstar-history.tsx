"use client";
import { Area, CartesianGrid, ComposedChart, Legend, Line, ResponsiveContainer, Scatter, Tooltip, XAxis, YAxis } from "recharts";

export interface HistoryDatum {
  vintage: string;
  gStar: number | null;
  band: [number, number] | null;
  diagnostic: number | null;
}

const asPct = (v: unknown) => (typeof v === "number" ? `${(v * 100).toFixed(2)}%` : Array.isArray(v) ? v.map((x) => `${(Number(x) * 100).toFixed(2)}%`).join(" – ") : String(v));

/** g* across vintages: the headline estimate with its interval band, and the single-economy diagnostic as dots. */
export function GStarHistory({ data, headline, diagnostic }: { data: HistoryDatum[]; headline: string; diagnostic: string | null }) {
  return (
    <div style={{ width: "100%", height: 300 }} data-testid="gstar-history">
      <ResponsiveContainer>
        <ComposedChart data={data} margin={{ top: 8, right: 16, bottom: 8, left: 8 }}>
          <CartesianGrid strokeDasharray="3 3" stroke="#e4e1d8" />
          <XAxis dataKey="vintage" tick={{ fontSize: 12 }} />
          <YAxis tickFormatter={(v: number) => `${(v * 100).toFixed(1)}%`} tick={{ fontSize: 12 }} width={56} />
          <Tooltip formatter={asPct} />
          <Legend />
          <Area dataKey="band" name={`${headline} interval`} stroke="none" fill="var(--accent-soft)" isAnimationActive={false} connectNulls />
          <Line dataKey="gStar" name={`${headline} g*`} stroke="var(--accent)" strokeWidth={2} dot isAnimationActive={false} connectNulls />
          {diagnostic && <Scatter dataKey="diagnostic" name={`${diagnostic} g* (diagnostic)`} fill="var(--revised)" isAnimationActive={false} />}
        </ComposedChart>
      </ResponsiveContainer>
    </div>
  );
}
