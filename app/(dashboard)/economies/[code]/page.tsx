import { notFound } from "next/navigation";
import { requirePageUser } from "@/lib/server/auth";
import { hasRole } from "@/lib/store/users";
import { getStore } from "@/lib/store";
import { changeFeed, economyHistory, listSpecs } from "@/lib/store/fits";
import { economyCoverage } from "@/lib/store/workspace";
import { GStarHistory, type HistoryDatum } from "../../../_components/gstar-history";
import { RenameEconomy } from "../../../_components/rename-economy";
import { interval, num, pct, pp, regimeLabel } from "../../../_components/format";

export const dynamic = "force-dynamic";

export default async function EconomyPage({ params }: { params: Promise<{ code: string }> }) {
  const { code } = await params;
  if (!/^[A-Z0-9]{3}$/.test(code)) notFound();
  const user = await requirePageUser(`/economies/${code}`);
  const store = await getStore();
  const economy = await store.prisma.economy.findUnique({ where: { code } });
  if (!economy) notFound();
  const specs = await listSpecs(store);
  const headline = specs.find((s) => s.isDefault) ?? specs[0];
  const diagnostic = specs.find((s) => s.name === "reference");
  const history = headline ? await economyHistory(store, code, headline.id) : [];
  const diagHistory = diagnostic && diagnostic.id !== headline?.id ? await economyHistory(store, code, diagnostic.id) : [];
  const diagByVintage = new Map(diagHistory.map((h) => [h.asOfLabel, h]));
  const chart: HistoryDatum[] = history.map((h) => ({
    vintage: h.vintage,
    gStar: h.gStar,
    band: h.gStarLo !== null && h.gStarHi !== null ? [h.gStarLo, h.gStarHi] : null,
    diagnostic: diagByVintage.get(h.asOfLabel)?.gStar ?? null,
  }));
  const changes = headline ? await changeFeed(store, { spec: headline.name, economy: code, limit: 100 }) : [];
  const coverage = (await economyCoverage(store)).find((e) => e.code === code);
  const latest = history.at(-1);
  const latestDiag = diagHistory.at(-1);
  return (
    <>
      <h1>
        {economy.name} <span className="muted">{economy.code}</span> {economy.isDemo && <span className="tag warn">invented</span>}
      </h1>
      <p className="lede">
        {economy.kind === "AGGREGATE" ? "A publisher aggregate (kept apart from economies)." : "Estimates across vintages."} Coverage:{" "}
        {coverage?.concepts.map((c) => `${c.concept} ${c.firstYear}–${c.lastYear}`).join("; ") || "no data"}.
      </p>
      {hasRole(user.role, "EDITOR") && <RenameEconomy code={economy.code} name={economy.name} />}

      {headline && latest ? (
        <section className="panel">
          <h2 style={{ marginTop: 0 }}>
            g* = {pct(latest.gStar)} <span className="muted">interval {interval(latest.gStarLo, latest.gStarHi)}</span>
          </h2>
          <p className="muted">
            Specification {headline.name}, data as of {latest.asOfLabel}. θ = {num(latest.theta)} (standard error {num(latest.seTheta)}), γ = {num(latest.gamma)}, n ={" "}
            {pct(latest.n)} from the researcher window, {latest.nobs} usable observations, regime {regimeLabel(latest.regime)}. A model-based scenario, not a forecast.
          </p>
          {latest.warnings.length > 0 && (
            <ul className="warnings">
              {latest.warnings.map((w, i) => (
                <li key={i}>{w}</li>
              ))}
            </ul>
          )}
          <GStarHistory data={chart} headline={headline.name} diagnostic={diagHistory.length ? diagnostic!.name : null} />
          {latestDiag && (
            <p className="muted">
              Diagnostic single-economy fit ({diagnostic!.name}): θ = {num(latestDiag.theta)}, γ = {num(latestDiag.gamma)}, g* = {pct(latestDiag.gStar)} {interval(latestDiag.gStarLo, latestDiag.gStarHi)}.
              Single-economy estimates are imprecise; they are shown to check the pooled result, not to replace it.
            </p>
          )}
        </section>
      ) : (
        <p className="panel">No estimates for this economy yet.</p>
      )}

      <h2>Drift across vintages</h2>
      <table className="grid" data-testid="drift-table">
        <thead>
          <tr>
            <th>Vintage</th>
            <th className="num">g* before</th>
            <th className="num">g* after</th>
            <th className="num">Revisions of old data</th>
            <th className="num">New years</th>
            <th>Regime</th>
            <th>What happened</th>
          </tr>
        </thead>
        <tbody>
          {changes.map((c) => (
            <tr key={c.id}>
              <td>{c.toLabel}</td>
              <td className="num">{pct(c.gStarFrom)}</td>
              <td className="num">{pct(c.gStarTo)}</td>
              <td className="num">{pp(c.revisionEffect)}</td>
              <td className="num">{pp(c.newDataEffect)}</td>
              <td>
                {c.regimeFrom && c.regimeFrom !== c.regimeTo ? `${regimeLabel(c.regimeFrom)} → ` : ""}
                {regimeLabel(c.regimeTo)}
              </td>
              <td>{c.reasons.join(" ")}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </>
  );
}
