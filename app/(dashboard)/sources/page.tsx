import { requirePageUser } from "@/lib/server/auth";
import { hasRole } from "@/lib/store/users";
import { getStore } from "@/lib/store";
import { sourceSummaries } from "@/lib/store/workspace";
import { getAlertSettings } from "@/lib/store/fits";
import { AlertThreshold, SourceSettings } from "../../_components/source-settings";

export const dynamic = "force-dynamic";

export default async function SourcesPage() {
  const user = await requirePageUser("/sources");
  const store = await getStore();
  const [sources, alerts] = await Promise.all([sourceSummaries(store), getAlertSettings(store)]);
  const canEdit = hasRole(user.role, "EDITOR");
  return (
    <>
      <h1>Sources and schedules</h1>
      <p className="lede">
        Each source is checked on its own schedule (cron: minute hour day-of-month month weekday, in the source&apos;s time zone). Agencies release
        at irregular dates, so a daily check is the default; an unchanged release stores nothing. Schedules can also be set in the configuration
        file (see the README).
      </p>
      <table className="grid" data-testid="source-table">
        <thead>
          <tr>
            <th>Source</th>
            <th>State</th>
            <th>Schedule and time zone</th>
            <th></th>
          </tr>
        </thead>
        <tbody>
          {sources.map((s) => (
            <SourceSettings
              key={s.name}
              canEdit={canEdit}
              source={{ name: s.name, title: s.title, enabled: s.enabled, schedule: s.schedule, timezone: s.timezone, isDemo: s.isDemo, vintages: s.vintages, latest: s.latest?.label ?? null }}
            />
          ))}
        </tbody>
      </table>
      <h2>Alerts</h2>
      <AlertThreshold value={alerts.gStarThreshold} canEdit={canEdit} />
    </>
  );
}
