// PATCH /api/sources/:name - switch scheduled fetching on or off, change its schedule or time zone (editor).
import { handle, json, parseInput } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { SourcePatch, sourceName } from "@/lib/schemas/api";
import { updateSourceSettings } from "@/lib/store/sources";
import { z } from "zod";

export const dynamic = "force-dynamic";

export async function PATCH(req: Request, ctx: { params: Promise<{ name: string }> }): Promise<Response> {
  return handle("PATCH /api/sources/:name", async () => {
    await requireUser("EDITOR");
    const { name } = parseInput(z.object({ name: sourceName }), await ctx.params, "path");
    const body = parseInput(SourcePatch, await req.json().catch(() => null), "body");
    return json({ source: await updateSourceSettings(await getStore(), name, body) });
  });
}
