import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db, rawDb } from "@/lib/db/client";
import { useTempDatabase } from "../helpers/temp-db";

/**
 * The Prisma client talks to SQLite through its own better-sqlite3 connection (opened by
 * @prisma/adapter-better-sqlite3), not through rawDb(). Pragmas such as foreign_keys,
 * busy_timeout and synchronous are per connection, so they are checked on that
 * connection itself, through the client.
 */

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
beforeAll(async () => {
  ctx = await useTempDatabase();
});
afterAll(async () => ctx.cleanup());

async function pragma(name: string): Promise<number | string> {
  const rows = (await db().$queryRawUnsafe(`PRAGMA ${name}`)) as Record<string, unknown>[];
  const value = Object.values(rows[0])[0];
  return typeof value === "bigint" ? Number(value) : (value as number | string);
}

describe("the Prisma client's own connection", () => {
  it("has foreign keys on, a 5 s busy timeout, WAL and synchronous=FULL like the raw connection", async () => {
    expect(await pragma("foreign_keys")).toBe(1);
    expect(await pragma("busy_timeout")).toBe(5_000);
    expect(await pragma("journal_mode")).toBe("wal");
    // 2 = FULL (SQLite's pragma documentation); better-sqlite3 builds with WAL default NORMAL (1).
    expect(await pragma("synchronous")).toBe(2);
    expect(rawDb().pragma("synchronous", { simple: true })).toBe(2);
  });

  it("sets them again on the connection Prisma opens after a disconnect", async () => {
    await db().$disconnect();
    expect(await pragma("synchronous")).toBe(2);
    expect(await pragma("foreign_keys")).toBe(1);
    expect(await pragma("busy_timeout")).toBe(5_000);
  });

  it("enforces foreign keys through Prisma's raw queries too", async () => {
    await expect(
      db().$executeRawUnsafe(
        "INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, count, source, enteredByName, idempotencyKey) VALUES ('2026-03-02', 999, 999, 999, 1, 'floor', 't', 'fk-raw')",
      ),
    ).rejects.toThrow(/FOREIGN KEY/i);
  });
});
