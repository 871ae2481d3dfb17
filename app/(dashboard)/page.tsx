import Link from "next/link";
import { getStore, migrationStatus } from "@/lib/store";
import { economyCoverage, sourceSummaries } from "@/lib/store/workspace";
import { changeFeed, fitsOfSet, getAlertSettings, latestFitSet, listSpecs } from "@/lib/store/fits";
import { ReleaseHistory } from "../_components/release-history";
import { interval, num, pct, pp, regimeLabel } from "../_components/format";

export const dynamic = "force-dynamic";

export default async function OverviewPage() {
  const store = await getStore();
  const [sources, economies, migration, specs, alerts] = await Promise.all([
    sourceSummaries(store),
    economyCoverage(store),
    migrationStatus(store),
    listSpecs(store),
    getAlertSettings(store),
  ]);
  const headline = specs.find((s) => s.isDefault);
  const set = headline ? await latestFitSet(store, headline.id) : null;
  const fits = set ? await fitsOfSet(store, set.id) : [];
  // What moved in the latest fit set, per economy.
  const moves = new Map((set ? await changeFeed(store, { toFitSetId: set.id, limit: 1000 }) : []).map((c) => [c.economy, c]));
  const feed = await changeFeed(store, { flaggedOnly: true, spec: headline?.name, limit: 12 });
  const vintages = sources.reduce((n, s) => n + s.vintages, 0);
  const latest = sources.flatMap((s) => (s.latest ? [s.latest.label] : [])).sort().at(-1);
  const pooled = set?.summary?.pooled as { theta: number; seTheta: number; gamma: number } | undefined;
  const level = (fits[0]?.details as { level?: number } | null)?.level ?? 0.9;

  return (
    <>
      <h1>Overview</h1>
      <p className="lede">
        Long-run technology growth implied by research effort, g* = γ·n / (1 − θ), for every economy, re-estimated at each new vintage of the
        data. Each figure states its specification and vintage; intervals show how little the data pin it down.
      </p>
      <div className="tiles">
        <div className="tile">
          <div className="label">Economies</div>
          <div className="value">{economies.length}</div>
          <div className="sub">aggregates kept apart</div>
        </div>
        <div className="tile">
          <div className="label">Vintages stored</div>
          <div className="value">{vintages}</div>
          <div className="sub">latest release {latest ?? "none yet"}</div>
        </div>
        <div className="tile">
          <div className="label">Common θ (headline spec)</div>
          <div className="value">{pooled ? num(pooled.theta) : "–"}</div>
          <div className="sub">{pooled ? `standard error ${num(pooled.seTheta)}, γ fixed at ${num(pooled.gamma, 1)}` : "no pooled fit yet"}</div>
        </div>
        <div className="tile">
          <div className="label">Store</div>
          <div className="value" data-testid="store-kind">
            {store.kind === "embedded" ? "embedded" : "PostgreSQL"}
          </div>
          <div className="sub">schema {migration.level ?? "empty"}</div>
        </div>
      </div>

      <section className="panel">
        <h2 style={{ marginTop: 0 }}>Implied long-run growth, latest vintage</h2>
        {headline && set ? (
          <>
            <p className="muted" data-testid="headline-spec">
              Specification <strong>{headline.name}</strong>: {headline.description} Data as of {set.asOfLabel}. Intervals at {Math.round(level * 100)}%.
              Moves are since the previous vintage, split into revisions of old data and newly published years.
            </p>
            <table className="grid" data-testid="gstar-table">
              <thead>
                <tr>
                  <th>Economy</th>
                  <th className="num">g*</th>
                  <th>Interval</th>
                  <th className="num">n</th>
                  <th>Regime</th>
                  <th className="num">Move</th>
                  <th className="num">of which revisions</th>
                  <th className="num">of which new years</th>
                  <th>Flags</th>
                </tr>
              </thead>
              <tbody>
                {fits.map((f) => {
                  const m = moves.get(f.economy);
                  const move = m && m.gStarFrom !== null && m.gStarTo !== null ? m.gStarTo - m.gStarFrom : null;
                  return (
                    <tr key={f.economy}>
                      <td>
                        <Link href={`/economies/${f.economy}`}>{f.economyName}</Link> <span className="muted">{f.economy}</span>
                      </td>
                      <td className="num">{pct(f.gStar)}</td>
                      <td>{interval(f.gStarLo, f.gStarHi)}</td>
                      <td className="num">{pct(f.n)}</td>
                      <td>{regimeLabel(f.regime)}</td>
                      <td className="num">{m ? pp(move) : "–"}</td>
                      <td className="num">{m ? pp(m.revisionEffect) : "–"}</td>
                      <td className="num">{m ? pp(m.newDataEffect) : "–"}</td>
                      <td>{f.warnings.length ? <span className="tag warn" title={f.warnings.join("\n")}>{f.warnings.length} warning{f.warnings.length > 1 ? "s" : ""}</span> : <span className="muted">none</span>}</td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
          </>
        ) : (
          <p>No estimates yet: once sources feed the model inputs, every new vintage is fitted here.</p>
        )}
      </section>

      <section className="panel">
        <h2 style={{ marginTop: 0 }}>What changed</h2>
        <p className="muted">Economies whose g* moved by at least {pp(alerts.gStarThreshold).replace("+", "")} , changed regime, or received new years of data.</p>
        {feed.length ? (
          <ul className="feed" data-testid="change-feed">
            {feed.map((c) => (
              <li key={c.id}>
                <strong>
                  <Link href={`/economies/${c.economy}`}>{c.economyName}</Link>
                </strong>{" "}
                <span className="muted">({c.toLabel})</span>: {c.reasons.join(" ")}
              </li>
            ))}
          </ul>
        ) : (
          <p>Nothing has moved beyond the threshold yet.</p>
        )}
      </section>

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
