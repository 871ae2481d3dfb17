// GET /api/health - liveness and store facts, answered without login (no secrets, no paths).
import { json } from "@/lib/server/respond";
import { getStore, migrationStatus } from "@/lib/store";
import { demoState } from "@/lib/store/workspace";
import { APP_VERSION } from "@/lib/version";

export const dynamic = "force-dynamic";

export async function GET(): Promise<Response> {
  try {
    const store = await getStore();
    const [migration, demo] = await Promise.all([migrationStatus(store), demoState(store)]);
    return json({
      status: migration.pending.length ? "migrations-pending" : "ok",
      version: APP_VERSION,
      store: store.kind,
      migration: { level: migration.level, applied: migration.applied, pending: migration.pending.length },
      demo: { loaded: demo.loaded, vintages: demo.vintages ?? 0 },
    });
  } catch (err) {
    console.error("[health] store unavailable:", err);
    return json({ status: "unavailable", version: APP_VERSION, error: "The store cannot be reached." }, { status: 503 });
  }
}
