#!/bin/sh
# Stand-in for Prisma's native schema engine, which cannot be downloaded on offline machines.
# prisma generate/validate/format never run it; migrations are created with
# scripts/new-migration.ts (WASM engine) and applied by lib/store/migrate.ts.
echo "Prisma's native schema engine is not installed on this machine: use 'npm run db:new-migration' to create migrations and 'npm run db:migrate' to apply them (see DEVELOPERS.md)." >&2
exit 1
