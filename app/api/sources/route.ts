// GET /api/sources - configured sources with their latest vintage (viewer role).
import { handle, json } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { sourceSummaries } from "@/lib/store/workspace";

export const dynamic = "force-dynamic";

export async function GET(): Promise<Response> {
  return handle("GET /api/sources", async () => {
    await requireUser("VIEWER");
    return json({ sources: await sourceSummaries(await getStore()) });
  });
}
