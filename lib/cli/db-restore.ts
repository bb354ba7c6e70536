// npm run db:restore -- FILE : replaces the database at DATABASE_URL with a checked backup.
// Stop the app first.
import { restoreDatabase } from "../db/backup";
import { applyPendingMigrations } from "../db/migrate";

const source = process.argv[2];
if (!source) {
  console.error("usage: npm run db:restore -- FILE   (stop the app first)");
  process.exit(2);
}
try {
  const { file } = await restoreDatabase(source);
  const applied = await applyPendingMigrations();
  console.log(`restored ${file} from ${source} (integrity ok${applied.length ? `; migrated: ${applied.join(", ")}` : ""})`);
} catch (error) {
  console.error(`restore failed: ${(error as Error).message}`);
  process.exit(1);
}
