import Link from "next/link";
import { getStore } from "@/lib/store";
import { economyCoverage } from "@/lib/store/workspace";

export const dynamic = "force-dynamic";

const conceptLabel: Record<string, string> = {
  researchers_fte: "Researchers (FTE)",
  researchers_per_million: "Researchers per million",
  population: "Population",
  tfp_index: "TFP index",
};

export default async function EconomiesPage() {
  const economies = await economyCoverage(await getStore());
  return (
    <>
      <h1>Economies</h1>
      <p className="lede">Years covered by each series in the latest vintage of every source.</p>
      <table className="grid" data-testid="economy-table">
        <thead>
          <tr>
            <th>Code</th>
            <th>Economy</th>
            <th>Series coverage</th>
          </tr>
        </thead>
        <tbody>
          {economies.map((e) => (
            <tr key={e.code}>
              <td>
                <code>{e.code}</code>
              </td>
              <td>
                <Link href={`/economies/${e.code}`}>{e.name}</Link> {e.isDemo && <span className="tag warn">invented</span>}
              </td>
              <td>
                {e.concepts.map((c) => (
                  <div key={c.concept}>
                    {conceptLabel[c.concept] ?? c.concept}: {c.firstYear}–{c.lastYear} <span className="muted">({c.values} values)</span>
                  </div>
                ))}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </>
  );
}
