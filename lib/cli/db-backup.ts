// npm run db:backup -- FILE : a consistent copy of the live database (safe while the app runs).
import { backupDatabase } from "../db/backup";
import { applyPendingMigrations } from "../db/migrate";

const target = process.argv[2];
if (!target) {
  console.error("usage: npm run db:backup -- FILE");
  process.exit(2);
}
try {
  await applyPendingMigrations();
  const { file, pages } = await backupDatabase(target);
  console.log(`backup written to ${file} (${pages} pages, integrity ok)`);
} catch (error) {
  console.error(`backup failed: ${(error as Error).message}`);
  process.exit(1);
}
