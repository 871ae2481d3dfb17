/**
 * Create a migration from the difference between prisma/migrations and prisma/schema.prisma,
 * offline: `npm run db:new-migration -- <name>`. Writes prisma/migrations/<yyyyMMddHHmmss>_<name>/migration.sql.
 * With `--check` it writes nothing and exits 1 when schema and migrations have drifted (CI).
 */
import fs from "node:fs";
import path from "node:path";
import { diffMigrationsToSchema, migrationsDir } from "./schema-engine";

const args = process.argv.slice(2);
const check = args.includes("--check");
const name = args.find((a) => !a.startsWith("--"));

const sql = await diffMigrationsToSchema();
if (check) {
  if (sql.trim()) {
    console.error("prisma/schema.prisma and prisma/migrations differ; run `npm run db:new-migration -- <name>`:\n" + sql);
    process.exit(1);
  }
  console.log("schema.prisma and the migrations folder agree.");
  process.exit(0);
}
if (!sql.trim()) {
  console.log("No changes: schema.prisma already matches the migrations.");
  process.exit(0);
}
if (!name || !/^[a-z0-9_]+$/.test(name)) {
  console.error("Give the migration a name of lower-case letters, digits and underscores, e.g. `npm run db:new-migration -- add_notes`.");
  process.exit(2);
}
const d = new Date();
const pad = (n: number) => String(n).padStart(2, "0");
const stamp = `${d.getUTCFullYear()}${pad(d.getUTCMonth() + 1)}${pad(d.getUTCDate())}${pad(d.getUTCHours())}${pad(d.getUTCMinutes())}${pad(d.getUTCSeconds())}`;
const dir = path.join(migrationsDir, `${stamp}_${name}`);
fs.mkdirSync(dir, { recursive: true });
fs.writeFileSync(path.join(dir, "migration.sql"), sql);
console.log(`Created ${path.relative(process.cwd(), dir)}/migration.sql`);
process.exit(0);
