// PATCH /api/sources/:name - switch scheduled fetching on or off, change its schedule or time zone (editor).
import { handle, json, parseInput } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { SourcePatch, sourceName } from "@/lib/schemas/api";
import { parseSourceDefinition } from "@/lib/ingestion/sources";
import { AppError } from "@/lib/errors";
import { z } from "zod";

export const dynamic = "force-dynamic";

export async function PATCH(req: Request, ctx: { params: Promise<{ name: string }> }): Promise<Response> {
  return handle("PATCH /api/sources/:name", async () => {
    await requireUser("EDITOR");
    const { name } = parseInput(z.object({ name: sourceName }), await ctx.params, "path");
    const body = parseInput(SourcePatch, await req.json().catch(() => null), "body");
    const store = await getStore();
    const row = await store.prisma.source.findUnique({ where: { name } });
    if (!row) throw new AppError("NOT_FOUND", `No source named "${name}".`, { field: "name" });
    let config: object;
    try {
      config = parseSourceDefinition({ ...(row.config as object), ...body });
    } catch (err) {
      // e.g. enabling a catalog source whose facts are not yet verified
      throw new AppError("VALIDATION", (err as Error).message, { field: body.enabled !== undefined ? "enabled" : "schedule" });
    }
    const source = await store.prisma.source.update({ where: { name }, data: { ...body, config } });
    return json({ source: { name: source.name, enabled: source.enabled, schedule: source.schedule, timezone: source.timezone } });
  });
}
