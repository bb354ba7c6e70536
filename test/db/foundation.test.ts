import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db, rawDb } from "@/lib/db/client";
import { useTempDatabase } from "../helpers/temp-db";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
beforeAll(async () => {
  ctx = await useTempDatabase();
});
afterAll(async () => ctx.cleanup());

describe("database foundation", () => {
  it("opens in WAL mode with foreign keys on and a busy timeout", () => {
    expect(rawDb().pragma("journal_mode", { simple: true })).toBe("wal");
    expect(rawDb().pragma("foreign_keys", { simple: true })).toBe(1);
    expect(Number(rawDb().pragma("busy_timeout", { simple: true }))).toBeGreaterThan(0);
  });

  it("records the applied migrations in Prisma's standard table", () => {
    const rows = rawDb().prepare("SELECT migration_name, finished_at FROM _prisma_migrations").all() as {
      migration_name: string;
      finished_at: string | null;
    }[];
    expect(rows.length).toBeGreaterThan(0);
    expect(rows.every((r) => r.finished_at !== null)).toBe(true);
  });

  it("refuses a tally that points at a line that does not exist (foreign keys enforced)", async () => {
    const shift = await db().shift.create({ data: { code: "A", name: "Early", startTime: "06:00", endTime: "14:00" } });
    const category = await db().defectCategory.create({ data: { code: "SCR", name: "Scratch" } });
    await expect(
      db().tallyEntry.create({
        data: {
          productionDate: "2026-03-02",
          shiftId: shift.id,
          lineId: 9999,
          categoryId: category.id,
          count: 1,
          source: "floor",
          enteredByName: "test",
          idempotencyKey: "k-1",
        },
      }),
    ).rejects.toThrow();
  });

  it("keeps an idempotency key unique", async () => {
    const line = await db().line.create({ data: { code: "L1", name: "Line 1" } });
    const shift = await db().shift.findFirstOrThrow();
    const category = await db().defectCategory.findFirstOrThrow();
    const row = {
      productionDate: "2026-03-02",
      shiftId: shift.id,
      lineId: line.id,
      categoryId: category.id,
      count: 2,
      source: "floor",
      enteredByName: "test",
      idempotencyKey: "same-key",
    };
    await db().tallyEntry.create({ data: row });
    await expect(db().tallyEntry.create({ data: row })).rejects.toThrow();
  });
});
