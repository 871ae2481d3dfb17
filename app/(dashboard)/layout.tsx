import Link from "next/link";
import type { ReactNode } from "react";
import { requirePageUser } from "@/lib/server/auth";
import { getStore } from "@/lib/store";
import { demoState } from "@/lib/store/workspace";
import { DEMO_NOTICE } from "@/lib/demo/scenario";
import { signOutAction } from "../login/actions";

export const dynamic = "force-dynamic";

export default async function DashboardLayout({ children }: { children: ReactNode }) {
  const user = await requirePageUser();
  const demo = await demoState(await getStore());
  return (
    <>
      <header className="masthead">
        <Link href="/" className="brand">
          Idea<span>front</span>
        </Link>
        <nav aria-label="Main">
          <Link href="/">Overview</Link>
          <Link href="/economies">Economies</Link>
          <Link href="/vintages">Vintages</Link>
          <Link href="/runs">Runs</Link>
          <Link href="/sources">Sources</Link>
        </nav>
        <div className="who">
          <span>
            {user.name} · {user.role.toLowerCase()}
          </span>
          <form action={signOutAction}>
            <button className="quiet" type="submit">
              Sign out
            </button>
          </form>
        </div>
      </header>
      {demo.loaded && (
        <div className="demo-ribbon" role="note" data-testid="demo-notice">
          {DEMO_NOTICE} Economy names and codes (XAA-XZZ) are fictional.
        </div>
      )}
      <main>{children}</main>
      <footer className="caution">
        Long-run growth figures here are model-based scenarios from the knowledge production function, with wide uncertainty; they are not
        forecasts. Every number states its specification and data vintage. Official projections follow each institution&apos;s own procedures.
      </footer>
    </>
  );
}
