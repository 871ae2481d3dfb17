import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { defineConfig } from "@playwright/test";

// Browser tests drive Debian's Chromium (never a downloaded browser) against `npm start` on its
// own port and a fresh embedded store.
const chromium = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
const port = Number(process.env.E2E_PORT ?? 3100);
const dataDir = process.env.E2E_DATA ?? fs.mkdtempSync(path.join(os.tmpdir(), "ideafront-e2e-"));
process.env.E2E_DATA = dataDir; // workers inherit the same folder

export default defineConfig({
  testDir: "test/e2e",
  timeout: 60_000,
  retries: 0,
  workers: 1,
  reporter: [["list"]],
  outputDir: path.join(os.tmpdir(), "ideafront-e2e-results"),
  use: {
    baseURL: `http://127.0.0.1:${port}`,
    trace: "off",
    launchOptions: {
      executablePath: chromium,
      args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"],
    },
  },
  webServer: {
    command: "node scripts/start.mjs",
    url: `http://127.0.0.1:${port}/api/health`,
    timeout: 240_000,
    reuseExistingServer: false,
    stdout: "pipe",
    stderr: "pipe",
    env: { PORT: String(port), HOST: "127.0.0.1", IDEAFRONT_DATA: dataDir, DATABASE_URL: "", IDEAFRONT_DEMO: "on", NEXT_TELEMETRY_DISABLED: "1" },
  },
});
