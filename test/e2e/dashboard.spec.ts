import { expect, test } from "@playwright/test";

// The dashboard shell in a real browser: sign in with the demo account, see the invented-data
// notice, the store kind, the demo source's release history and the economy table.
test("a demo user signs in and sees the dashboard with the demo notice", async ({ page, request }) => {
  const health = await (await request.get("/api/health")).json();
  expect(health).toMatchObject({ status: "ok", store: "embedded", demo: { loaded: true, vintages: 8 } });

  await page.goto("/");
  await expect(page).toHaveURL(/\/login/);
  await page.getByLabel("Email").fill("editor@demo.ideafront.test");
  await page.getByLabel("Password").fill("wrong-password");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("alert").filter({ hasText: "do not match" })).toBeVisible();

  await page.getByLabel("Password").fill("ideafront-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("heading", { name: "Overview" })).toBeVisible();
  await expect(page.getByTestId("demo-notice")).toContainText("Invented demo data");
  await expect(page.getByTestId("store-kind")).toHaveText("embedded");
  await expect(page.getByTestId("release-history-demo-statistics-office")).toBeVisible();
  await expect(page.locator(".recharts-bar-rectangle").first()).toBeVisible();
  await expect(page.getByText("not forecasts")).toBeVisible();

  await page.getByRole("link", { name: "Economies" }).click();
  const table = page.getByTestId("economy-table");
  await expect(table).toContainText("Aldoria");
  await expect(table.locator("tbody tr")).toHaveCount(16);

  await page.getByRole("link", { name: "Vintages" }).click();
  await expect(page.getByTestId("vintage-table").locator("tbody tr")).toHaveCount(8);
  await expect(page.getByTestId("vintage-table")).toContainText('Unit change for');
});

test("protected API routes refuse anonymous callers", async ({ request }) => {
  const r = await request.get("/api/sources");
  expect(r.status()).toBe(401);
  expect((await r.json()).error.code).toBe("UNAUTHENTICATED");
});
