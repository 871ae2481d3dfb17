// GET /api/fits?spec=NAME - the latest fit set of a spec (default: the team default) with every economy (viewer).
import { handle, json, parseInput, queryObject } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { fitsOfSet, latestFitSet, listSpecs } from "@/lib/store/fits";
import { FitsQuery } from "@/lib/schemas/api";
import { AppError } from "@/lib/errors";

export const dynamic = "force-dynamic";

export async function GET(req: Request): Promise<Response> {
  return handle("GET /api/fits", async () => {
    await requireUser("VIEWER");
    const q = parseInput(FitsQuery, queryObject(req), "query");
    const store = await getStore();
    const specs = await listSpecs(store);
    const spec = q.spec ? specs.find((s) => s.name === q.spec) : specs.find((s) => s.isDefault);
    if (!spec) throw new AppError("NOT_FOUND", q.spec ? `No spec named "${q.spec}".` : "No default spec.", { field: "spec" });
    const set = await latestFitSet(store, spec.id);
    return json({ spec: { name: spec.name, description: spec.description }, fitSet: set, fits: set ? await fitsOfSet(store, set.id) : [] });
  });
}
