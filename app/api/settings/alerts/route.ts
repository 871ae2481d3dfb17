// GET /api/settings/alerts - the alert threshold (viewer). PUT - change it (editor).
import { handle, json, parseInput } from "@/lib/server/respond";
import { requireUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { getAlertSettings, setAlertSettings } from "@/lib/store/fits";
import { AlertsBody } from "@/lib/schemas/api";

export const dynamic = "force-dynamic";

export async function GET(): Promise<Response> {
  return handle("GET /api/settings/alerts", async () => {
    await requireUser("VIEWER");
    return json(await getAlertSettings(await getStore()));
  });
}

export async function PUT(req: Request): Promise<Response> {
  return handle("PUT /api/settings/alerts", async () => {
    await requireUser("EDITOR");
    const body = parseInput(AlertsBody, await req.json().catch(() => null), "body");
    await setAlertSettings(await getStore(), body);
    return json(body);
  });
}
