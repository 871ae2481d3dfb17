// `npm start`: check the settings, prepare the store (migrations, demo workspace), build the web
// app when needed, start the server with its scheduler, and print the address and the demo login.
// Bad settings stop here with one sentence naming the setting.
import { spawn, spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";

const root = path.resolve(import.meta.dirname, "..");
const env = { ...process.env };
const port = env.PORT || "3000";
const host = env.HOST || "0.0.0.0";
const nodeBin = process.execPath;
const nextBin = path.join(root, "node_modules", "next", "dist", "bin", "next");
const cli = path.join(root, "bin", "ideafront.mjs");

function fail(message) {
  console.error(message);
  process.exit(1);
}

// 1. Settings, port, store, migrations, demo workspace (the compiled command line does the work).
if (!fs.existsSync(path.join(root, "dist", "cli.mjs"))) {
  const b = spawnSync(nodeBin, [path.join(root, "scripts", "build-cli.mjs")], { stdio: "inherit", cwd: root });
  if (b.status !== 0) fail("Could not compile the command line; run `npm install` again.");
}
const pre = spawnSync(nodeBin, [cli, "preflight", "--port", port, "--host", host], { stdio: ["ignore", "inherit", "pipe"], cwd: root, env, encoding: "utf8" });
if (pre.status !== 0) {
  const lines = (pre.stderr || "").trim().split("\n").filter((l) => !l.startsWith("  demo release") && !l.startsWith("Opening") && !l.startsWith("Connecting"));
  fail(lines.join("\n") || "Start-up checks failed.");
} else if (pre.stderr) {
  process.stderr.write(pre.stderr);
}

// 2. Build the web app when it has not been built, or sources changed since.
const buildId = path.join(root, ".next", "BUILD_ID");
function newestSource(dir) {
  let newest = 0;
  if (!fs.existsSync(dir)) return 0;
  for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
    if (e.name === "node_modules" || e.name === "generated" || e.name.startsWith(".")) continue;
    const p = path.join(dir, e.name);
    newest = Math.max(newest, e.isDirectory() ? newestSource(p) : fs.statSync(p).mtimeMs);
  }
  return newest;
}
const stale =
  !fs.existsSync(buildId) ||
  Math.max(newestSource(path.join(root, "app")), newestSource(path.join(root, "lib")), fs.statSync(path.join(root, "package.json")).mtimeMs) >
    fs.statSync(buildId).mtimeMs;
if (stale || env.IDEAFRONT_REBUILD === "1") {
  console.log("Building the web app (first start, or the code changed) ...");
  const b = spawnSync(nodeBin, [nextBin, "build"], { stdio: ["ignore", "pipe", "pipe"], cwd: root, env: { ...env, NEXT_TELEMETRY_DISABLED: "1" }, encoding: "utf8" });
  if (b.status !== 0) {
    process.stderr.write(b.stdout + b.stderr);
    fail("The web app did not build (output above).");
  }
}

// 3. Serve.
const child = spawn(nodeBin, [nextBin, "start", "-p", port, "-H", host], {
  cwd: root,
  env: { ...env, NEXT_TELEMETRY_DISABLED: "1" },
  stdio: ["ignore", "pipe", "pipe"],
});
let ready = false;
const errLines = [];
child.stdout.on("data", (d) => {
  if (ready) process.stdout.write(d);
});
child.stderr.on("data", (d) => {
  if (ready) process.stderr.write(d);
  else errLines.push(String(d));
});
child.on("exit", (code, signal) => {
  if (!ready) {
    const said = errLines.join("").split("\n").find((l) => l.startsWith("[ideafront]"));
    fail(said ? said.replace("[ideafront] ", "") : `The server stopped during start-up (${signal ?? `exit code ${code}`}).\n${errLines.join("")}`);
  }
  process.exit(code ?? 1);
});
for (const sig of ["SIGINT", "SIGTERM"]) process.on(sig, () => child.kill(sig));

const shown = host === "0.0.0.0" || host === "::" ? "localhost" : host;
const url = `http://${shown}:${port}`;
const started = Date.now();
while (!ready) {
  await new Promise((r) => setTimeout(r, 300));
  try {
    const r = await fetch(`http://127.0.0.1:${port}/api/health`);
    if (r.ok) {
      const h = await r.json();
      ready = true;
      console.log(`\nIdeafront is running at ${url}  (store: ${h.store}, schema ${h.migration.level})`);
      if (h.demo.loaded) {
        console.log(`Demo workspace loaded: ${h.demo.vintages} releases of invented data for fictional economies.`);
        console.log(`Demo login: editor@demo.ideafront.test / ${env.IDEAFRONT_DEMO_PASSWORD || "ideafront-demo"}  (also viewer@ and admin@demo.ideafront.test)`);
      }
      console.log("Press Ctrl+C to stop.\n");
    }
  } catch {
    if (Date.now() - started > 120_000) {
      child.kill("SIGTERM");
      fail(`The server did not answer on port ${port} within two minutes.`);
    }
  }
}
