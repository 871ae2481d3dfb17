// GET /api/sources/:name/vintages - the release history of one source (viewer role).
import { z } from "zod";
import { handle, json, parseInput } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { listVintages } from "@/lib/store/vintages";
import { AppError } from "@/lib/errors";

export const dynamic = "force-dynamic";

const Params = z.object({ name: z.string().regex(/^[a-z0-9][a-z0-9-]{0,62}$/, "must be a source slug") });

export async function GET(_req: Request, ctx: { params: Promise<{ name: string }> }): Promise<Response> {
  return handle("GET /api/sources/:name/vintages", async () => {
    await requireUser("VIEWER");
    const { name } = parseInput(Params, await ctx.params, "path");
    const store = await getStore();
    const source = await store.prisma.source.findUnique({ where: { name } });
    if (!source) throw new AppError("NOT_FOUND", `No source named "${name}".`, { field: "name" });
    const vintages = await listVintages(store, name);
    return json({ source: { name: source.name, title: source.title, isDemo: source.isDemo }, vintages });
  });
}
