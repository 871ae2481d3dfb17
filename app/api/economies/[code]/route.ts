// GET /api/economies/:code - an economy with its parameter history under each spec (viewer).
// PATCH /api/economies/:code - rename it (editor).
import { handle, json, parseInput } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { economyHistory, listSpecs } from "@/lib/store/fits";
import { EconomyParams, EconomyPatch } from "@/lib/schemas/api";
import { AppError } from "@/lib/errors";

export const dynamic = "force-dynamic";

export async function GET(_req: Request, ctx: { params: Promise<{ code: string }> }): Promise<Response> {
  return handle("GET /api/economies/:code", async () => {
    await requireUser("VIEWER");
    const { code } = parseInput(EconomyParams, await ctx.params, "path");
    const store = await getStore();
    const economy = await store.prisma.economy.findUnique({ where: { code } });
    if (!economy) throw new AppError("NOT_FOUND", `No economy with code ${code}.`, { field: "code" });
    const specs = await listSpecs(store);
    const history = Object.fromEntries(await Promise.all(specs.map(async (s) => [s.name, await economyHistory(store, code, s.id)] as const)));
    return json({ economy, history });
  });
}

export async function PATCH(req: Request, ctx: { params: Promise<{ code: string }> }): Promise<Response> {
  return handle("PATCH /api/economies/:code", async () => {
    await requireUser("EDITOR");
    const { code } = parseInput(EconomyParams, await ctx.params, "path");
    const body = parseInput(EconomyPatch, await req.json().catch(() => null), "body");
    const store = await getStore();
    const found = await store.prisma.economy.findUnique({ where: { code } });
    if (!found) throw new AppError("NOT_FOUND", `No economy with code ${code}.`, { field: "code" });
    const economy = await store.prisma.economy.update({ where: { code }, data: { name: body.name } });
    return json({ economy });
  });
}
