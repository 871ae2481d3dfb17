"use client";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";

interface Run {
  id: number;
  job: string;
  trigger: string;
  status: string;
  instance: string;
  startedAt: string;
  finishedAt: string | null;
  counts: Record<string, number> | null;
  progress: { done: number; total: number; message: string } | null;
  error: string | null;
}

function when(iso: string | null): string {
  return iso ? iso.slice(0, 19).replace("T", " ") + " UTC" : "–";
}

function seconds(a: string, b: string | null): string {
  if (!b) return "";
  return `${((new Date(b).getTime() - new Date(a).getTime()) / 1000).toFixed(1)} s`;
}

/** The run log with live progress; editors can start a job now. */
export function RunLog({ canRun, jobs }: { canRun: boolean; jobs: { job: string; label: string }[] }) {
  const client = useQueryClient();
  const [message, setMessage] = useState<string | null>(null);
  const runs = useQuery({
    queryKey: ["runs"],
    queryFn: async () => {
      const r = await fetch("/api/runs?limit=50");
      if (!r.ok) throw new Error((await r.json()).error?.message ?? `HTTP ${r.status}`);
      return ((await r.json()) as { runs: Run[] }).runs;
    },
    refetchInterval: (q) => (q.state.data?.some((r) => r.status === "running") ? 1500 : 10_000),
  });
  const start = useMutation({
    mutationFn: async (job: string) => {
      const r = await fetch("/api/runs", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ job }) });
      const body = await r.json();
      if (!r.ok) throw new Error(body.error?.message ?? `HTTP ${r.status}`);
      return body as { runId: number };
    },
    onSuccess: (d, job) => {
      setMessage(`Started ${job} (run ${d.runId}).`);
      void client.invalidateQueries({ queryKey: ["runs"] });
    },
    onError: (e) => setMessage(e.message),
  });
  return (
    <>
      {canRun && (
        <div className="panel row" data-testid="run-now">
          <strong>Run now:</strong>
          {jobs.map((j) => (
            <button key={j.job} className="quiet" onClick={() => start.mutate(j.job)} disabled={start.isPending}>
              {j.label}
            </button>
          ))}
          {message && <span className="muted" role="status">{message}</span>}
        </div>
      )}
      {runs.isPending && <p className="muted">Loading the run log…</p>}
      {runs.isError && <p className="error">The run log is unavailable: {runs.error.message}</p>}
      {runs.data && (
        <table className="grid" data-testid="run-table">
          <thead>
            <tr>
              <th>#</th>
              <th>Job</th>
              <th>Trigger</th>
              <th>Status</th>
              <th>Started</th>
              <th>Took</th>
              <th>Counts</th>
              <th>Error or progress</th>
            </tr>
          </thead>
          <tbody>
            {runs.data.map((r) => (
              <tr key={r.id}>
                <td>{r.id}</td>
                <td>{r.job}</td>
                <td>{r.trigger}</td>
                <td className={`status-${r.status}`}>{r.status}</td>
                <td>{when(r.startedAt)}</td>
                <td>{seconds(r.startedAt, r.finishedAt)}</td>
                <td>{r.counts ? Object.entries(r.counts).map(([k, v]) => `${k} ${v}`).join(", ") : "–"}</td>
                <td>
                  {r.status === "running" && r.progress ? (
                    <span>
                      <progress max={r.progress.total} value={r.progress.done} /> {r.progress.message}
                    </span>
                  ) : (
                    (r.error ?? "")
                  )}
                </td>
              </tr>
            ))}
            {!runs.data.length && (
              <tr>
                <td colSpan={8} className="muted">
                  No runs yet.
                </td>
              </tr>
            )}
          </tbody>
        </table>
      )}
    </>
  );
}
