/**
 * Prisma's schema engine, run as WebAssembly so that migrations can be created and checked on
 * machines that cannot download the native engine. An in-memory PGlite database serves as the
 * shadow database on which the existing migrations are replayed.
 */
import fs from "node:fs";
import path from "node:path";
import { PGlite } from "@electric-sql/pglite";
import { PrismaPGlite } from "pglite-prisma-adapter";
import * as bg from "@prisma/schema-engine-wasm/schema_engine_bg";
import { bindMigrationAwareSqlAdapterFactory } from "@prisma/driver-adapter-utils";

const root = path.resolve(import.meta.dirname, "..");
export const migrationsDir = path.join(root, "prisma", "migrations");
export const schemaPath = path.join(root, "prisma", "schema.prisma");

let loaded = false;
function loadWasm(): void {
  if (loaded) return;
  const wasmFile = path.join(root, "node_modules", "@prisma", "schema-engine-wasm", "schema_engine_bg.wasm");
  const module = new WebAssembly.Module(fs.readFileSync(wasmFile));
  const instance = new WebAssembly.Instance(module, { "./schema_engine_bg.js": bg as unknown as WebAssembly.ModuleImports });
  (bg as unknown as { __wbg_set_wasm(x: unknown): void }).__wbg_set_wasm(instance.exports);
  (instance.exports as unknown as { __wbindgen_start(): void }).__wbindgen_start();
  loaded = true;
}

function migrationList(): bg.MigrationList {
  const dirs = fs.existsSync(migrationsDir)
    ? fs.readdirSync(migrationsDir, { withFileTypes: true }).filter((d) => d.isDirectory()).map((d) => d.name).sort()
    : [];
  const lockPath = path.join(migrationsDir, "migration_lock.toml");
  return {
    baseDir: migrationsDir,
    lockfile: { path: "migration_lock.toml", content: fs.existsSync(lockPath) ? fs.readFileSync(lockPath, "utf8") : null },
    shadowDbInitScript: "",
    migrationDirectories: dirs.map((name) => ({
      path: name,
      migrationFile: { path: "migration.sql", content: { tag: "ok", value: fs.readFileSync(path.join(migrationsDir, name, "migration.sql"), "utf8") } },
    })),
  } as unknown as bg.MigrationList;
}

/** SQL that takes the database described by the migrations folder to the state of schema.prisma ("" when in step). */
export async function diffMigrationsToSchema(): Promise<string> {
  loadWasm();
  const pglite = new PGlite();
  const engine = await bg.SchemaEngine.new(
    { datamodels: [[schemaPath, fs.readFileSync(schemaPath, "utf8")]] },
    () => {},
    bindMigrationAwareSqlAdapterFactory(new PrismaPGlite(pglite)),
  );
  try {
    const result = await engine.diff({
      from: { tag: "migrations", ...migrationList() },
      to: { tag: "schemaDatamodel", files: [{ path: schemaPath, content: fs.readFileSync(schemaPath, "utf8") }] },
      script: true,
      exitCode: true,
      filters: { externalTables: [], externalEnums: [] },
    });
    const sql = result.stdout ?? "";
    return result.exitCode === 2 ? sql : "";
  } finally {
    engine.free();
    await pglite.close();
  }
}
