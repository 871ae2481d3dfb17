// Compile the command line (lib/cli) into dist/cli.mjs with esbuild, so `npx ideafront` starts
// fast (no TypeScript transpiling at each start). Dependencies stay in node_modules (external).
// Runs at `npm install` (postinstall) and by `npm run build:cli`.
import { build } from "esbuild";
import fs from "node:fs";
import { createRequire } from "node:module";
import path from "node:path";

const root = path.resolve(import.meta.dirname, "..");
const BUNDLED = ["commander", "csv-parse", "d3-dsv", "pure-rand"];
const started = Date.now();
fs.rmSync(path.join(root, "dist"), { recursive: true, force: true });
await build({
  entryPoints: { cli: path.join(root, "lib", "cli", "main.ts") },
  outdir: path.join(root, "dist"),
  outExtension: { ".js": ".mjs" },
  chunkNames: "chunks/[name]-[hash]",
  // Each command's implementation becomes its own chunk, loaded only when that command runs.
  splitting: true,
  bundle: true,
  platform: "node",
  target: "node20",
  format: "esm",
  tsconfig: path.join(root, "tsconfig.json"),
  sourcemap: "linked",
  logLevel: "warning",
  plugins: [bundleJsonFromPackages(), externalPackagesExcept(BUNDLED)],
  // The generated Prisma client sets __dirname itself; give bundled CommonJS-style code a require.
  banner: { js: "import { createRequire as __ifCreateRequire } from 'node:module'; const require = __ifCreateRequire(import.meta.url);" },
});
console.log(`ideafront command line compiled to dist/cli.mjs in ${Date.now() - started} ms`);

/**
 * Packages the command line bundles: small pure-JavaScript libraries on the path of every
 * estimation command, so that a start resolves and loads a handful of files instead of ~50. Every
 * other package stays in node_modules (the database drivers, native and WASM modules, zod, ...).
 */
function externalPackagesExcept(bundled) {
  return {
    name: "external-packages",
    setup(b) {
      b.onResolve({ filter: /^[^./]/ }, (args) => {
        if (args.path.startsWith("@/") || args.path.startsWith("node:")) return undefined;
        const name = args.path.startsWith("@") ? args.path.split("/").slice(0, 2).join("/") : args.path.split("/")[0];
        return bundled.includes(name) ? undefined : { path: args.path, external: true };
      });
    },
  };
}

/** JSON files of packages are bundled (Node 20 would need an import attribute to load them). */
function bundleJsonFromPackages() {
  const require = createRequire(path.join(root, "package.json"));
  return {
    name: "bundle-package-json",
    setup(b) {
      b.onResolve({ filter: /\.json$/ }, (args) =>
        args.path.startsWith(".") || args.path.startsWith("@/") || path.isAbsolute(args.path) ? undefined : { path: require.resolve(args.path) },
      );
    },
  };
}
