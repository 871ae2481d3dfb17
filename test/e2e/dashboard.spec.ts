import { expect, test, type Page } from "@playwright/test";

// The dashboard in a real browser on the invented demo workspace.

async function signIn(page: Page, email = "editor@demo.ideafront.test") {
  await page.goto("/login");
  await page.getByLabel("Email").fill(email);
  await page.getByLabel("Password").fill("ideafront-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("heading", { name: "Overview" })).toBeVisible();
}

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
  await expect(page.getByTestId("headline-spec")).toContainText("team-default");
  await expect(page.getByTestId("gstar-table").locator("tbody tr")).toHaveCount(16);
  await expect(page.getByTestId("change-feed")).toContainText("New data for year 2025");
  await expect(page.getByTestId("release-history-demo-statistics-office")).toBeVisible();
  await expect(page.locator(".recharts-bar-rectangle").first()).toBeVisible();
  await expect(page.getByText("not forecasts")).toBeVisible();

  await page.getByRole("link", { name: "Economies" }).click();
  const table = page.getByTestId("economy-table");
  await expect(table.locator("tbody tr")).toHaveCount(16);
  await table.getByRole("link", { name: "Aldoria" }).click();
  await expect(page.getByRole("heading", { level: 1 })).toContainText("Aldoria");
  await expect(page.getByTestId("gstar-history")).toBeVisible();
  await expect(page.getByTestId("drift-table").locator("tbody tr")).toHaveCount(7);

  await page.getByRole("link", { name: "Vintages" }).click();
  await expect(page.getByTestId("vintage-table").locator("tbody tr")).toHaveCount(8);
  await expect(page.getByTestId("vintage-table")).toContainText("Unit change for");
});

test("an editor runs a refit now and sees it in the run log", async ({ page }) => {
  await signIn(page);
  await page.getByRole("link", { name: "Runs" }).click();
  await page.getByTestId("run-now").getByRole("button", { name: "Refit all active specs" }).click();
  await expect(page.getByRole("status")).toContainText("Started refit");
  await expect(page.getByTestId("run-table").locator("tbody tr").first()).toContainText("refit");
  await expect(page.getByTestId("run-table").locator("tbody tr").first()).toContainText("succeeded", { timeout: 30_000 });
});

test("a viewer cannot change schedules or run jobs", async ({ page, request }) => {
  await signIn(page, "viewer@demo.ideafront.test");
  await page.getByRole("link", { name: "Runs" }).click();
  await expect(page.getByTestId("run-table")).toBeVisible();
  await expect(page.getByTestId("run-now")).toHaveCount(0);
  // The server refuses too, whatever the page shows.
  const r = await page.request.post("/api/runs", { data: { job: "refit" } });
  expect(r.status()).toBe(403);
  const anonymous = await request.get("/api/sources");
  expect(anonymous.status()).toBe(401);
  expect((await anonymous.json()).error.code).toBe("UNAUTHENTICATED");
});
