// npm run db:migration -- NAME : writes a migration for what schema.prisma changed.
import { createMigration } from "../db/migrate";

const name = process.argv[2];
if (!name) {
  console.error("usage: npm run db:migration -- NAME   (lower-case letters, digits, '_')");
  process.exit(2);
}
try {
  const folder = await createMigration(name);
  console.log(folder ? `created ${folder}` : "schema.prisma and prisma/migrations agree: nothing to write");
} catch (error) {
  console.error((error as Error).message);
  process.exit(1);
}
