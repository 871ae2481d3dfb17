// GET /api/runs - the run log, newest first (viewer). POST /api/runs - run a job now (editor).
import { handle, json, parseInput, queryObject } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { startJobNow } from "@/lib/server/jobs";
import { getStore } from "@/lib/store";
import { listRuns } from "@/lib/store/runs";
import { RunNowBody, RunsQuery } from "@/lib/schemas/api";

export const dynamic = "force-dynamic";

export async function GET(req: Request): Promise<Response> {
  return handle("GET /api/runs", async () => {
    await requireUser("VIEWER");
    const q = parseInput(RunsQuery, queryObject(req), "query");
    return json({ runs: await listRuns(await getStore(), q) });
  });
}

export async function POST(req: Request): Promise<Response> {
  return handle("POST /api/runs", async () => {
    await requireUser("EDITOR");
    const body = parseInput(RunNowBody, await req.json().catch(() => null), "body");
    const { runId } = await startJobNow(body.job);
    return json({ runId }, { status: 202 });
  });
}
