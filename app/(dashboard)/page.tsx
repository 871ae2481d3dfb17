import Link from "next/link";
import { getStore, migrationStatus } from "@/lib/store";
import { economyCoverage, sourceSummaries } from "@/lib/store/workspace";
import { ReleaseHistory } from "../_components/release-history";

export const dynamic = "force-dynamic";

export default async function OverviewPage() {
  const store = await getStore();
  const [sources, economies, migration] = await Promise.all([sourceSummaries(store), economyCoverage(store), migrationStatus(store)]);
  const vintages = sources.reduce((n, s) => n + s.vintages, 0);
  const latest = sources.flatMap((s) => (s.latest ? [s.latest.label] : [])).sort().at(-1);
  return (
    <>
      <h1>Overview</h1>
      <p className="lede">
        Researcher, population and productivity series arrive here release by release. Every vintage is kept, so each estimate of long-run
        growth can be traced to the data as they were published.
      </p>
      <div className="tiles">
        <div className="tile">
          <div className="label">Economies</div>
          <div className="value">{economies.length}</div>
          <div className="sub">aggregates kept apart</div>
        </div>
        <div className="tile">
          <div className="label">Sources</div>
          <div className="value">{sources.length}</div>
          <div className="sub">{sources.filter((s) => s.enabled).length} fetched on a schedule</div>
        </div>
        <div className="tile">
          <div className="label">Vintages stored</div>
          <div className="value">{vintages}</div>
          <div className="sub">latest release {latest ?? "none yet"}</div>
        </div>
        <div className="tile">
          <div className="label">Store</div>
          <div className="value" data-testid="store-kind">
            {store.kind === "embedded" ? "embedded" : "PostgreSQL"}
          </div>
          <div className="sub">schema {migration.level ?? "empty"}</div>
        </div>
      </div>

      {sources.map((s) => (
        <section className="panel" key={s.name}>
          <h2 style={{ marginTop: 0 }}>
            {s.title} {s.isDemo && <span className="tag warn">invented demo source</span>}
          </h2>
          <p className="muted">
            {s.vintages} vintages · latest {s.latest?.label ?? "none"} · {s.enabled ? `checked on schedule "${s.schedule}" (${s.timezone})` : "not scheduled"} ·{" "}
            <Link href={`/vintages?source=${encodeURIComponent(s.name)}`}>release details</Link>
          </p>
          {s.vintages > 0 && <ReleaseHistory source={s.name} />}
        </section>
      ))}
      {sources.length === 0 && <p className="panel">No sources yet. Import a file or enable a public source to begin.</p>}
    </>
  );
}
