// `npm test`: unit and integration suites (vitest), then the browser suite (Playwright with
// Debian's Chromium). Suites that need what this machine lacks (TEST_DATABASE_URL for the
// PostgreSQL half, /usr/bin/chromium for the browser) say what they skip and why; with
// IDEAFRONT_REQUIRE_ALL_SUITES=1 (CI) a skip is a failure.
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";

const root = path.resolve(import.meta.dirname, "..");
const requireAll = process.env.IDEAFRONT_REQUIRE_ALL_SUITES === "1";
const bin = (name) => path.join(root, "node_modules", ".bin", name);
const run = (cmd, args, env = {}) => spawnSync(cmd, args, { stdio: "inherit", cwd: root, env: { ...process.env, ...env } }).status ?? 1;

// Suites CI must never skip, and checks that depend on data outside the repository.
const skipped = [];
const notes = [];
if (!process.env.TEST_DATABASE_URL) skipped.push("integration tests on PostgreSQL (set TEST_DATABASE_URL to a server where databases may be created)");
if (!fs.existsSync(path.resolve(root, "..", "shared", "data"))) notes.push("checks against real reference data (../shared/data is absent beside this checkout)");

let status = run(bin("vitest"), ["run"]);

const chromium = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
if (status === 0) {
  if (fs.existsSync(chromium)) {
    status = run(bin("playwright"), ["test"]);
  } else {
    skipped.push(`browser tests (no Chromium at ${chromium}; install Debian's chromium package or set CHROMIUM_PATH)`);
  }
}

if (skipped.length || notes.length) {
  console.log(`\nSkipped on this machine:\n${[...skipped, ...notes].map((s) => `  - ${s}`).join("\n")}`);
}
if (skipped.length) {
  if (requireAll) {
    console.error("IDEAFRONT_REQUIRE_ALL_SUITES=1: no suite may be skipped.");
    process.exit(1);
  }
}
process.exit(status);
