import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { closeDb } from "@/lib/db/client";
import { applyPendingMigrations } from "@/lib/db/migrate";

/**
 * A real, migrated SQLite file in a fresh temporary folder, set as DATABASE_URL for the
 * code under test. No mocks: integration tests run against the same engine as the app.
 */
export async function useTempDatabase(): Promise<{ url: string; dir: string; cleanup: () => Promise<void> }> {
  await closeDb();
  const dir = mkdtempSync(path.join(tmpdir(), "linemix-test-"));
  const url = `file:${path.join(dir, "test.db")}`;
  process.env.DATABASE_URL = url;
  await applyPendingMigrations(url);
  return {
    url,
    dir,
    cleanup: async () => {
      await closeDb();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}
