import { expect, test } from "@playwright/test";

// Route handlers as a table of cases: who asks, what, the expected status and error code.
// Every protected route answers 401 to anonymous callers and 403 below the needed role; bad input
// answers 422 naming the field.

type Who = "anonymous" | "viewer" | "editor";
interface Case {
  who: Who;
  method: "GET" | "POST" | "PATCH" | "PUT";
  path: string;
  body?: unknown;
  status: number;
  code?: string;
  field?: string;
}

const cases: Case[] = [
  { who: "anonymous", method: "GET", path: "/api/health", status: 200 },
  { who: "anonymous", method: "GET", path: "/api/sources", status: 401, code: "UNAUTHENTICATED" },
  { who: "anonymous", method: "GET", path: "/api/fits", status: 401, code: "UNAUTHENTICATED" },
  { who: "anonymous", method: "GET", path: "/api/changes", status: 401, code: "UNAUTHENTICATED" },
  { who: "anonymous", method: "GET", path: "/api/runs", status: 401, code: "UNAUTHENTICATED" },
  { who: "anonymous", method: "GET", path: "/api/economies/XAL", status: 401, code: "UNAUTHENTICATED" },
  { who: "viewer", method: "GET", path: "/api/sources", status: 200 },
  { who: "viewer", method: "GET", path: "/api/sources/demo-statistics-office/vintages", status: 200 },
  { who: "viewer", method: "GET", path: "/api/sources/Not_A_Slug/vintages", status: 422, code: "VALIDATION", field: "name" },
  { who: "viewer", method: "GET", path: "/api/sources/no-such-source/vintages", status: 404, code: "NOT_FOUND" },
  { who: "viewer", method: "GET", path: "/api/fits", status: 200 },
  { who: "viewer", method: "GET", path: "/api/fits?spec=reference", status: 200 },
  { who: "viewer", method: "GET", path: "/api/fits?spec=nope", status: 404, code: "NOT_FOUND" },
  { who: "viewer", method: "GET", path: "/api/changes?flagged=1&limit=5", status: 200 },
  { who: "viewer", method: "GET", path: "/api/changes?limit=0", status: 422, code: "VALIDATION", field: "limit" },
  { who: "viewer", method: "GET", path: "/api/changes?economy=xx", status: 422, code: "VALIDATION", field: "economy" },
  { who: "viewer", method: "GET", path: "/api/runs?limit=5", status: 200 },
  { who: "viewer", method: "GET", path: "/api/runs/abc", status: 422, code: "VALIDATION", field: "id" },
  { who: "viewer", method: "GET", path: "/api/runs/999999", status: 404, code: "NOT_FOUND" },
  { who: "viewer", method: "GET", path: "/api/economies/XAL", status: 200 },
  { who: "viewer", method: "GET", path: "/api/economies/ZZZ", status: 404, code: "NOT_FOUND" },
  { who: "viewer", method: "POST", path: "/api/runs", body: { job: "refit" }, status: 403, code: "FORBIDDEN" },
  { who: "viewer", method: "PATCH", path: "/api/economies/XAL", body: { name: "X" }, status: 403, code: "FORBIDDEN" },
  { who: "viewer", method: "PATCH", path: "/api/sources/demo-statistics-office", body: { enabled: false }, status: 403, code: "FORBIDDEN" },
  { who: "viewer", method: "PUT", path: "/api/settings/alerts", body: { gStarThreshold: 0.002 }, status: 403, code: "FORBIDDEN" },
  { who: "editor", method: "POST", path: "/api/runs", body: { job: "delete-everything" }, status: 422, code: "VALIDATION", field: "job" },
  { who: "editor", method: "POST", path: "/api/runs", body: { job: "fetch:no-such-source" }, status: 404, code: "NOT_FOUND" },
  { who: "editor", method: "PATCH", path: "/api/economies/XAL", body: { name: "" }, status: 422, code: "VALIDATION", field: "name" },
  { who: "editor", method: "PATCH", path: "/api/economies/XAL", body: { name: "Aldoria", extra: 1 }, status: 422, code: "VALIDATION" },
  { who: "editor", method: "PATCH", path: "/api/economies/XAL", body: { name: "Aldoria" }, status: 200 },
  { who: "editor", method: "PATCH", path: "/api/sources/demo-statistics-office", body: { schedule: "every day" }, status: 422, code: "VALIDATION", field: "schedule" },
  { who: "editor", method: "PATCH", path: "/api/sources/demo-statistics-office", body: { timezone: "Mars/Olympus" }, status: 422, code: "VALIDATION", field: "timezone" },
  { who: "editor", method: "PATCH", path: "/api/sources/demo-statistics-office", body: { schedule: "0 7 * * 1", timezone: "Europe/Paris" }, status: 200 },
  { who: "editor", method: "PUT", path: "/api/settings/alerts", body: { gStarThreshold: -1 }, status: 422, code: "VALIDATION", field: "gStarThreshold" },
  { who: "editor", method: "PUT", path: "/api/settings/alerts", body: { gStarThreshold: 0.001 }, status: 200 },
];

test("route handlers answer each case with the expected status and code", async ({ browser, baseURL }) => {
  const contexts: Partial<Record<Who, Awaited<ReturnType<typeof browser.newContext>>>> = {};
  for (const who of ["anonymous", "viewer", "editor"] as const) {
    const ctx = await browser.newContext({ baseURL });
    if (who !== "anonymous") {
      const page = await ctx.newPage();
      await page.goto("/login");
      await page.getByLabel("Email").fill(`${who}@demo.ideafront.test`);
      await page.getByLabel("Password").fill("ideafront-demo");
      await page.getByRole("button", { name: "Sign in" }).click();
      await expect(page.getByRole("heading", { name: "Overview" })).toBeVisible();
      await page.close();
    }
    contexts[who] = ctx;
  }
  const results: { case: string; status: number; expected: number; ok: boolean }[] = [];
  for (const c of cases) {
    const r = await contexts[c.who]!.request.fetch(c.path, { method: c.method, data: c.body });
    const body = await r.json().catch(() => ({}));
    const ok = r.status() === c.status && (!c.code || body.error?.code === c.code) && (!c.field || body.error?.field === c.field);
    results.push({ case: `${c.who} ${c.method} ${c.path}`, status: r.status(), expected: c.status, ok });
    expect.soft(r.status(), `${c.who} ${c.method} ${c.path}: ${JSON.stringify(body).slice(0, 200)}`).toBe(c.status);
    if (c.code) expect.soft(body.error?.code, `${c.method} ${c.path}`).toBe(c.code);
    if (c.field) expect.soft(body.error?.field, `${c.method} ${c.path}`).toBe(c.field);
  }
  console.table(results);
  for (const ctx of Object.values(contexts)) await ctx!.close();
});
