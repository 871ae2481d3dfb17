import path from "node:path";
import { defineConfig } from "prisma/config";

// Offline machines cannot download Prisma's native schema engine. `prisma generate` never runs it
// but the CLI checks that it exists, so point the documented override at a stub that explains
// itself. A machine that has the real engine can set PRISMA_SCHEMA_ENGINE_BINARY to it.
process.env.PRISMA_SCHEMA_ENGINE_BINARY ??= path.join(import.meta.dirname, "scripts", "schema-engine-unavailable.sh");

export default defineConfig({
  schema: "prisma/schema.prisma",
  migrations: { path: "prisma/migrations" },
  datasource: { url: process.env.DATABASE_URL ?? "postgresql://localhost:5432/ideafront" },
});
