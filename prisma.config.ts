import { defineConfig } from "prisma/config";

// Used by the Prisma CLI (generate; migrate deploy where its engine can be downloaded).
// Linemix applies migrations itself through the WebAssembly schema engine (lib/db/migrate.ts).
export default defineConfig({
  schema: "prisma/schema.prisma",
  migrations: { path: "prisma/migrations" },
  datasource: { url: process.env.DATABASE_URL ?? "file:./data/linemix.db" },
});
