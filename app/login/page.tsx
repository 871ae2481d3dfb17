import { getStore } from "@/lib/store";
import { demoState } from "@/lib/store/workspace";
import { LoginForm } from "./login-form";

export const dynamic = "force-dynamic";

export default async function LoginPage({ searchParams }: { searchParams: Promise<{ next?: string }> }) {
  const { next } = await searchParams;
  const demo = await demoState(await getStore());
  return (
    <main>
      <div className="panel login-card">
        <h1>Sign in to Ideafront</h1>
        <p className="lede">Long-run growth assumptions from research effort, kept vintage by vintage.</p>
        <LoginForm next={next ?? "/"} />
        {demo.loaded && (
          <p className="muted" data-testid="demo-login-hint">
            This installation holds the invented demo workspace. The demo accounts are printed by <code>npm start</code> and listed in the
            README.
          </p>
        )}
      </div>
    </main>
  );
}
