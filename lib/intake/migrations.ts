import { readdirSync, existsSync } from "node:fs";
import path from "node:path";
import { openSqlite } from "../db/client";
import { applyPendingMigrations } from "../db/migrate";
import { MIGRATIONS_DIR } from "../db/schema-engine";

/**
 * The import and export commands apply pending migrations before they start. They
 * usually run while the app is serving, and the schema engine cannot apply anything
 * while another process holds the database open, so the engine is only started when a
 * migration folder is not yet recorded as applied in _prisma_migrations.
 */
export function pendingMigrationNames(url?: string): string[] {
  const folders = existsSync(MIGRATIONS_DIR)
    ? readdirSync(MIGRATIONS_DIR, { withFileTypes: true })
        .filter((d) => d.isDirectory() && existsSync(path.join(MIGRATIONS_DIR, d.name, "migration.sql")))
        .map((d) => d.name)
    : [];
  const sqlite = openSqlite(url, { fileMustExist: false });
  try {
    const table = sqlite.prepare("SELECT name FROM sqlite_master WHERE type = 'table' AND name = '_prisma_migrations'").get();
    if (!table) return folders;
    const applied = new Set(
      (
        sqlite.prepare("SELECT migration_name FROM _prisma_migrations WHERE finished_at IS NOT NULL AND rolled_back_at IS NULL").all() as {
          migration_name: string;
        }[]
      ).map((r) => r.migration_name),
    );
    return folders.filter((f) => !applied.has(f));
  } finally {
    sqlite.close();
  }
}

export async function applyMigrationsIfPending(url?: string): Promise<string[]> {
  if (pendingMigrationNames(url).length === 0) return [];
  try {
    return await applyPendingMigrations(url);
  } catch (error) {
    throw new Error(
      `pending database migrations could not be applied (${error instanceof Error ? error.message.split("\n")[0].slice(0, 160) : String(error)}); ` +
        "stop the app and run npm run db:migrate, then try again",
    );
  }
}
