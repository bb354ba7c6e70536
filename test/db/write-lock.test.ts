import { readFileSync, readdirSync, statSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { POST as postTalliesRoute } from "@/app/api/v1/tallies/route";
import { db, rawDb, writeTransaction } from "@/lib/db/client";
import { currentWriteHolder, withRawWrite, withWriteLock, writeLockState } from "@/lib/db/write-lock";
import { postFloorSheet } from "@/lib/intake/http";
import { importCsv } from "@/lib/intake/import";
import { EMPTY_BASIS } from "@/lib/intake/plans";
import { useTempDatabase } from "../helpers/temp-db";
import { count, seedPlant, system, type Plant } from "../intake/fixture";

/**
 * The process-wide write lock (lib/db/write-lock.ts) on a real SQLite file. The bug it
 * fixes, as the load bench met it: a Prisma interactive transaction (BEGIN IMMEDIATE)
 * awaits while holding SQLite's write lock; a floor post then writes on the raw
 * connection, whose busy handler sleeps the whole thread for the 5 s busy timeout (the
 * Prisma transaction cannot finish meanwhile, it needs the same thread) and fails with
 * SQLITE_BUSY. Measured before the fix with the first test below: the floor post threw
 * "database is locked" after 5,067 ms and stored nothing (shared 2-core machine).
 */

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
});
afterAll(async () => ctx.cleanup());
beforeEach(() => rawDb().exec("DELETE FROM TallyEntry; DELETE FROM InspectionCount; DELETE FROM Submission; DELETE FROM ImportBatch;"));

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));
const HOLD_MS = 300;
// Shift A runs 06:00–14:00 (test/intake/fixture.ts), so a floor sheet for 2026-03-02 A is open at 09:10.
const duringShiftA = () => new Date(2026, 2, 2, 9, 10);
let keyNo = 0;

function floorRequest(counts: { category: string; count: number }[]): Request {
  const body = { idempotencyKey: `lock-sheet-${String(++keyNo).padStart(4, "0")}`, basis: EMPTY_BASIS, date: "2026-03-02", shift: "A", line: "L1", mode: "add", counts };
  return new Request("http://plant.example/api/v1/floor-sheets", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
}

/** A Prisma write transaction that writes, then awaits a timer holding SQLite's write lock, bypassing writeTransaction. */
function unlockedHoldingTransaction(name: string): Promise<string> {
  return db().$transaction(async (tx) => {
    await tx.line.update({ where: { id: plant.lines.L2 }, data: { name } });
    await sleep(HOLD_MS);
    return name;
  });
}

const lineName = () => (rawDb().prepare("SELECT name FROM Line WHERE id = ?").get(plant.lines.L2) as { name: string }).name;

describe("a raw-connection write during an awaiting Prisma write transaction", () => {
  it("waits for the transaction (not SQLite's 5 s busy timeout), and both writes are stored", async () => {
    const held = writeTransaction(async (tx) => {
      await tx.line.update({ where: { id: plant.lines.L2 }, data: { name: "held by sync" } });
      await sleep(HOLD_MS);
      return "committed";
    });
    await sleep(50); // the transaction is open and awaiting its timer
    expect(writeLockState().held).toBe(true);
    const t0 = performance.now();
    const response = await postFloorSheet(floorRequest([{ category: "scratch", count: 2 }]), plant.users.operator, duringShiftA());
    const waited = performance.now() - t0;
    expect(response.status).toBe(201);
    expect(await held).toBe("committed");
    // It waited for the rest of the transaction (≈ 250 ms), not for the busy timeout (5,000 ms).
    expect(waited).toBeGreaterThan(HOLD_MS - 100);
    expect(waited).toBeLessThan(2_000);
    expect(lineName()).toBe("held by sync");
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry WHERE count = 2")).toBe(1);
    expect(writeLockState()).toEqual({ held: false, waiting: 0 });
  });

  it("the same for the API route handler and a CSV import queued behind it", async () => {
    const held = writeTransaction(async (tx) => {
      await tx.line.update({ where: { id: plant.lines.L2 }, data: { name: "held again" } });
      await sleep(HOLD_MS);
    });
    await sleep(50);
    const api = postTalliesRoute(
      new Request("http://plant.example:3000/api/v1/tallies", {
        method: "POST",
        headers: { "content-type": "application/json", authorization: `Bearer ${plant.tokens.write}`, "idempotency-key": "lock-api-0001" },
        body: JSON.stringify({ rows: [{ date: "2026-03-02", shift: "A", line: "L1", category: "dent", count: 7 }] }),
      }),
    );
    const imported = importCsv(Buffer.from("date,shift,line,category,count\n2026-03-03,A,L1,crack,9\n"), { actor: system, fileName: "lock.csv" });
    const [apiResponse, importOutcome] = await Promise.all([api, imported, held]);
    expect(apiResponse.status).toBe(201);
    expect(importOutcome.status).toBe("imported");
    expect(count("SELECT COUNT(*) AS n FROM TallyEntry WHERE count IN (7, 9)")).toBe(2);
    expect(lineName()).toBe("held again");
  });

  it("without the lock (db().$transaction directly) the raw write meets SQLITE_BUSY: the hazard the lock removes", async () => {
    // busy_timeout shortened on the raw connection so that this costs 200 ms, not 5 s.
    rawDb().pragma("busy_timeout = 200");
    try {
      const held = unlockedHoldingTransaction("unlocked");
      await sleep(50);
      const t0 = performance.now();
      await expect(postFloorSheet(floorRequest([{ category: "scratch", count: 3 }]), plant.users.operator, duringShiftA())).rejects.toThrow(/database is locked/);
      // The thread slept in SQLite's busy handler for the whole timeout.
      expect(performance.now() - t0).toBeGreaterThanOrEqual(190);
      await held;
      expect(count("SELECT COUNT(*) AS n FROM TallyEntry WHERE count = 3")).toBe(0);
    } finally {
      rawDb().pragma("busy_timeout = 5000");
    }
  });
});

describe("withWriteLock", () => {
  it("serves waiters first come, first served", async () => {
    const order: string[] = [];
    const first = withWriteLock(async () => {
      await sleep(30);
      order.push("first");
    });
    const rest = ["second", "third", "fourth"].map((name) =>
      withWriteLock(async () => {
        order.push(name);
        await sleep(1);
      }),
    );
    expect(writeLockState()).toEqual({ held: true, waiting: 3 });
    await Promise.all([first, ...rest]);
    expect(order).toEqual(["first", "second", "third", "fourth"]);
    expect(writeLockState()).toEqual({ held: false, waiting: 0 });
  });

  it("is released when fn throws (synchronously or after an await), and the next waiter runs", async () => {
    const failing = withWriteLock(async () => {
      await sleep(10);
      throw new Error("write failed");
    });
    const next = withWriteLock(() => "ran");
    await expect(failing).rejects.toThrow("write failed");
    expect(await next).toBe("ran");
    await expect(withWriteLock(() => {
      throw new RangeError("sync failure");
    })).rejects.toThrow("sync failure");
    expect(writeLockState()).toEqual({ held: false, waiting: 0 });
  });

  it("a Prisma transaction that throws is rolled back and releases the lock", async () => {
    await db().line.update({ where: { id: plant.lines.L2 }, data: { name: "before" } });
    await expect(
      writeTransaction(async (tx) => {
        await tx.line.update({ where: { id: plant.lines.L2 }, data: { name: "rolled back" } });
        await sleep(10);
        throw new Error("abandoned");
      }),
    ).rejects.toThrow("abandoned");
    expect(lineName()).toBe("before");
    expect(writeLockState().held).toBe(false);
    const response = await postFloorSheet(floorRequest([{ category: "dent", count: 4 }]), plant.users.operator, duringShiftA());
    expect(response.status).toBe(201);
  });

  it("nested use runs at once instead of queueing behind itself (no deadlock)", async () => {
    const result = await withWriteLock(async () => {
      const inner = await withWriteLock(async () => {
        await sleep(1);
        return withWriteLock(() => "innermost");
      });
      // A raw write path called from inside a plain holder: the floor post goes through.
      const response = await postFloorSheet(floorRequest([{ category: "crack", count: 5 }]), plant.users.operator, duringShiftA());
      return `${inner}/${response.status}`;
    });
    expect(result).toBe("innermost/201");
    expect(writeLockState().held).toBe(false);
  });

  it("nested writeTransaction joins the outer transaction: one commit, or one rollback of both", async () => {
    await writeTransaction(async (tx) => {
      await tx.line.update({ where: { id: plant.lines.L2 }, data: { name: "outer" } });
      await writeTransaction(async (inner) => {
        expect(inner).toBe(tx);
        await inner.line.update({ where: { id: plant.lines.L1 }, data: { name: "inner" } });
      });
    });
    expect(lineName()).toBe("outer");
    await expect(
      writeTransaction(async (tx) => {
        await writeTransaction((inner) => inner.line.update({ where: { id: plant.lines.L1 }, data: { name: "inner, undone" } }));
        await tx.line.update({ where: { id: plant.lines.L2 }, data: { name: "outer, undone" } });
        throw new Error("outer fails");
      }),
    ).rejects.toThrow("outer fails");
    expect(lineName()).toBe("outer");
    expect((rawDb().prepare("SELECT name FROM Line WHERE id = ?").get(plant.lines.L1) as { name: string }).name).toBe("inner");
    await db().line.update({ where: { id: plant.lines.L1 }, data: { name: "Line L1" } });
  });

  it("a raw write inside a Prisma write transaction is refused at once (it could only stall 5 s and fail)", async () => {
    const t0 = performance.now();
    await expect(
      writeTransaction(async () => {
        await withRawWrite(() => rawDb().prepare("UPDATE Line SET name = 'raw inside' WHERE id = ?").run(plant.lines.L2));
      }),
    ).rejects.toThrow(/cannot run inside a Prisma write transaction/);
    expect(performance.now() - t0).toBeLessThan(1_000);
    expect(lineName()).not.toBe("raw inside");
  });

  it("work left running after the holder finished queues like anyone else", async () => {
    let late: Promise<boolean> | null = null;
    await withWriteLock(() => {
      late = sleep(20).then(() => currentWriteHolder() !== undefined);
    });
    const other = withWriteLock(() => sleep(40));
    expect(await late!).toBe(false);
    await other;
  });
});

describe("every write transaction in the source goes through the lock", () => {
  const root = path.resolve(__dirname, "../..");
  function sources(dir: string): string[] {
    return readdirSync(dir).flatMap((name) => {
      const full = path.join(dir, name);
      if (name === "generated" || name === "node_modules") return [];
      if (statSync(full).isDirectory()) return sources(full);
      return /\.(ts|tsx)$/.test(name) ? [full] : [];
    });
  }
  const files = [...sources(path.join(root, "lib")), ...sources(path.join(root, "app"))];

  it("Prisma: $transaction is called only by writeTransaction in lib/db/client.ts", () => {
    const callers = files.filter((f) => /\.\$transaction\(/.test(readFileSync(f, "utf8"))).map((f) => path.relative(root, f));
    expect(callers).toEqual(["lib/db/client.ts"]);
  });

  it("raw connection: the request-path files that open a write transaction take the lock", () => {
    // lib/monitor opens read transactions only; lib/demo and lib/cli run in their own process.
    const writers = files
      .filter((f) => !/lib\/(monitor|demo|cli)\/|lib\/db\/write-lock\.ts$/.test(f))
      .filter((f) => /\.transaction\(/.test(readFileSync(f, "utf8")))
      .map((f) => path.relative(root, f));
    expect(writers.sort()).toEqual(["lib/intake/import.ts", "lib/intake/submissions.ts"]);
    for (const f of writers) expect(readFileSync(path.join(root, f), "utf8")).toMatch(/withRawWrite\(/);
  });
});

describe("single Prisma writes outside a transaction", () => {
  it("wait for an open write transaction instead of joining it (and being undone by its rollback)", async () => {
    const held = writeTransaction(async (tx) => {
      await tx.line.update({ where: { id: plant.lines.L2 }, data: { name: "to be rolled back" } });
      await sleep(HOLD_MS);
      throw new Error("rollback");
    }).catch((error: Error) => error.message);
    await sleep(50);
    const t0 = performance.now();
    // Before the fix this returned after ≈ 2 ms, inside the other transaction, and was lost with it.
    await db().line.update({ where: { id: plant.lines.L1 }, data: { name: "written outside" } });
    expect(performance.now() - t0).toBeGreaterThan(HOLD_MS - 100);
    expect(await held).toBe("rollback");
    expect((rawDb().prepare("SELECT name FROM Line WHERE id = ?").get(plant.lines.L1) as { name: string }).name).toBe("written outside");
    await db().line.update({ where: { id: plant.lines.L1 }, data: { name: "Line L1" } });
  });
});
