#!/usr/bin/env node
// Entry point of `npx ideafront`: runs the compiled command line (built by `npm install`).
import { existsSync } from "node:fs";
import { fileURLToPath, pathToFileURL } from "node:url";
import path from "node:path";

const compiled = path.join(path.dirname(fileURLToPath(import.meta.url)), "..", "dist", "cli.mjs");
if (!existsSync(compiled)) {
  console.error("The ideafront command line is not compiled yet: run `npm install` (or `npm run build:cli`) in the project folder.");
  process.exit(1);
}
await import(pathToFileURL(compiled).href);
