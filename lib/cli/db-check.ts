// npm run db:check : fails when schema.prisma and prisma/migrations disagree.
import { schemaDriftSql } from "../db/migrate";

const sql = await schemaDriftSql();
if (sql) {
  console.error("schema.prisma has changes that no migration records. Run: npm run db:migration -- NAME\n");
  console.error(sql);
  process.exit(1);
}
console.log("schema.prisma and prisma/migrations agree");
