// GET /api/runs/:id - one run with its live progress (viewer).
import { handle, json, parseInput } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { findRun } from "@/lib/store/runs";
import { IdParams } from "@/lib/schemas/api";
import { AppError } from "@/lib/errors";

export const dynamic = "force-dynamic";

export async function GET(_req: Request, ctx: { params: Promise<{ id: string }> }): Promise<Response> {
  return handle("GET /api/runs/:id", async () => {
    await requireUser("VIEWER");
    const { id } = parseInput(IdParams, await ctx.params, "path");
    const run = await findRun(await getStore(), id);
    if (!run) throw new AppError("NOT_FOUND", `No run ${id}.`, { field: "id" });
    return json({ run });
  });
}
