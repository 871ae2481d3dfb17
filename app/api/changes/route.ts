// GET /api/changes - what moved per vintage: g* moves, regime changes, new data years (viewer).
import { handle, json, parseInput, queryObject } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { changeFeed, getAlertSettings } from "@/lib/store/fits";
import { ChangesQuery } from "@/lib/schemas/api";

export const dynamic = "force-dynamic";

export async function GET(req: Request): Promise<Response> {
  return handle("GET /api/changes", async () => {
    await requireUser("VIEWER");
    const q = parseInput(ChangesQuery, queryObject(req), "query");
    const store = await getStore();
    return json({ threshold: (await getAlertSettings(store)).gStarThreshold, changes: await changeFeed(store, { ...q, flaggedOnly: q.flagged }) });
  });
}
