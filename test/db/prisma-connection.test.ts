import { spawn, type ChildProcess } from "node:child_process";
import { once } from "node:events";
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

/**
 * Another process holds the write lock for `ms` milliseconds. (Not a connection of this
 * process: better-sqlite3's busy wait blocks the thread, so a timer here could not
 * release it.) Resolves once the lock is held.
 */
async function lockElsewhere(file: string, ms: number): Promise<ChildProcess> {
  const child = spawn(
    process.execPath,
    ["-e", `const D=require("better-sqlite3");const d=new D(${JSON.stringify(file)});d.exec("BEGIN EXCLUSIVE");console.log("locked");setTimeout(()=>{d.exec("ROLLBACK");d.close();process.exit(0)},${ms});`],
    { cwd: process.cwd(), stdio: ["ignore", "pipe", "inherit"] },
  );
  await new Promise<void>((resolve, reject) => {
    child.stdout!.on("data", (d: Buffer) => d.toString().includes("locked") && resolve());
    child.on("exit", (code) => reject(new Error(`locker exited with ${code}`)));
  });
  return child;
}

describe("Prisma transactions and another process's write lock", () => {
  it.each([1_000, 3_000])(
    "a transaction that reads before it writes waits %i ms for the lock (BEGIN IMMEDIATE) instead of failing at once",
    async (ms) => {
      const line = await db().line.upsert({ where: { code: "LK" }, create: { code: "LK", name: "Locked line" }, update: { name: "Locked line" } });
      const locker = await lockElsewhere(ctx.url.slice("file:".length), ms);
      const t0 = Date.now();
      // With a deferred BEGIN this failed after about 12 ms with SQLITE_BUSY (measured before the fix).
      await db().$transaction(async (tx) => {
        const before = await tx.line.findUniqueOrThrow({ where: { id: line.id } });
        await tx.line.update({ where: { id: line.id }, data: { name: `${before.name} (renamed)` } });
      });
      expect(Date.now() - t0).toBeGreaterThanOrEqual(ms - 100);
      expect((await db().line.findUniqueOrThrow({ where: { id: line.id } })).name).toBe("Locked line (renamed)");
      if (locker.exitCode === null) await once(locker, "exit");
    },
    20_000,
  );
});
