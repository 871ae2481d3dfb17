import { requirePageUser } from "@/lib/server/auth";
import { hasRole } from "@/lib/store/users";
import { getStore } from "@/lib/store";
import { RunLog } from "../../_components/run-log";

export const dynamic = "force-dynamic";

export default async function RunsPage() {
  const user = await requirePageUser("/runs");
  const sources = await (await getStore()).prisma.source.findMany({ orderBy: { name: "asc" } });
  const jobs = [{ job: "refit", label: "Refit all active specs" }, ...sources.map((s) => ({ job: `fetch:${s.name}`, label: `Fetch ${s.title}` }))];
  return (
    <>
      <h1>Runs</h1>
      <p className="lede">
        Every scheduled or manual job leaves a record here: when it ran, what it fetched and stored, which fits it made, and, when it failed, why
        in one sentence. A failed fetch leaves the previous vintage current; the next scheduled run tries again.
      </p>
      <RunLog canRun={hasRole(user.role, "EDITOR")} jobs={jobs} />
    </>
  );
}
