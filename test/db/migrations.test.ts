import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { schemaDriftSql } from "@/lib/db/migrate";
import { SCHEMA_PATH } from "@/lib/db/schema-engine";

describe("migration drift check", () => {
  it("finds schema.prisma and prisma/migrations in agreement", async () => {
    expect(await schemaDriftSql()).toBe("");
  });

  it("fails when a model field is added without a migration", async () => {
    const schema = readFileSync(SCHEMA_PATH, "utf8").replace(
      "model Line {\n",
      "model Line {\n  paintColour String?\n",
    );
    const sql = await schemaDriftSql(schema);
    expect(sql).toContain('ALTER TABLE "Line" ADD COLUMN "paintColour"');
  });
});
