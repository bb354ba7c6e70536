// npm run db:migrate : applies pending migrations to DATABASE_URL (default ./data/linemix.db).
import { applyPendingMigrations } from "../db/migrate";
import { databaseFile } from "../db/url";

try {
  const applied = await applyPendingMigrations();
  console.log(applied.length ? `applied: ${applied.join(", ")}` : "database is up to date");
  console.log(`database: ${databaseFile()}`);
} catch (error) {
  console.error(`migration failed: ${(error as Error).message}`);
  process.exit(1);
}
