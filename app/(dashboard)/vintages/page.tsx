import { getStore } from "@/lib/store";
import { sourceSummaries } from "@/lib/store/workspace";
import { listVintages } from "@/lib/store/vintages";

export const dynamic = "force-dynamic";

export default async function VintagesPage({ searchParams }: { searchParams: Promise<{ source?: string }> }) {
  const store = await getStore();
  const sources = await sourceSummaries(store);
  const { source } = await searchParams;
  const chosen = sources.find((s) => s.name === source) ?? sources[0];
  const vintages = chosen ? await listVintages(store, chosen.name) : [];
  return (
    <>
      <h1>Vintages</h1>
      <p className="lede">Each release of a source is a vintage. Values are stored only when new or changed, so every past release can be read back exactly.</p>
      {chosen ? (
        <>
          <h2>
            {chosen.title} {chosen.isDemo && <span className="tag warn">invented demo source</span>}
          </h2>
          <table className="grid" data-testid="vintage-table">
            <thead>
              <tr>
                <th>#</th>
                <th>Release</th>
                <th>Fetched</th>
                <th className="num">Values</th>
                <th className="num">Added</th>
                <th className="num">Revised</th>
                <th className="num">Removed</th>
                <th>Notes</th>
              </tr>
            </thead>
            <tbody>
              {vintages.map((v) => (
                <tr key={v.id}>
                  <td>{v.seq}</td>
                  <td>{v.label}</td>
                  <td>{v.fetchedAt.toISOString().slice(0, 16).replace("T", " ")} UTC</td>
                  <td className="num">{v.observationCount.toLocaleString("en")}</td>
                  <td className="num">{v.addedCount.toLocaleString("en")}</td>
                  <td className="num">{v.revisedCount.toLocaleString("en")}</td>
                  <td className="num">{v.removedCount.toLocaleString("en")}</td>
                  <td>{v.notes.length ? v.notes.map((n, i) => <div key={i}>{n}</div>) : <span className="muted">none</span>}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </>
      ) : (
        <p className="panel">No sources yet.</p>
      )}
    </>
  );
}
