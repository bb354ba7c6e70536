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

describe("pending migrations", () => {
  it("lists every folder for a new file, none once applied, and skips the engine while the app holds the file", async () => {
    const { mkdtempSync, readdirSync, rmSync } = await import("node:fs");
    const { tmpdir } = await import("node:os");
    const path = await import("node:path");
    const { applyPendingMigrations, pendingMigrationNames } = await import("@/lib/db/migrate");
    const { openSqlite } = await import("@/lib/db/client");
    const dir = mkdtempSync(path.join(tmpdir(), "linemix-pending-"));
    const url = `file:${path.join(dir, "p.db")}`;
    const folders = readdirSync("prisma/migrations", { withFileTypes: true }).filter((d) => d.isDirectory()).map((d) => d.name).sort();
    expect(pendingMigrationNames(url)).toEqual(folders);
    expect(await applyPendingMigrations(url)).toEqual(folders);
    expect(pendingMigrationNames(url)).toEqual([]);
    const holder = openSqlite(url);
    holder.prepare("BEGIN IMMEDIATE").run();
    expect(await applyPendingMigrations(url)).toEqual([]);
    holder.prepare("ROLLBACK").run();
    holder.close();
    rmSync(dir, { recursive: true, force: true });
  });
});
