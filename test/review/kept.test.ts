import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db, rawDb } from "@/lib/db/client";
import { keptUntilRecordsChange, keptUntilWrite, keptWhileSame, recordsStamp } from "@/lib/review/kept";
import { updateMaster } from "@/lib/db/master-data";
import { useTempDatabase } from "../helpers/temp-db";

let cleanup: () => Promise<void>;
let file: string;

beforeAll(async () => {
  const t = await useTempDatabase();
  cleanup = t.cleanup;
  file = t.url.replace(/^file:/, "");
  rawDb();
});
afterAll(() => cleanup());

function counting() {
  let loads = 0;
  const load = keptUntilWrite(async (key) => ({ key, n: ++loads }), 2);
  return { load, loads: () => loads };
}

describe("keptUntilWrite", () => {
  it("reuses a value until another connection commits, then loads again", async () => {
    const c = counting();
    const first = await c.load("a");
    expect(await c.load("a")).toBe(first);
    expect(c.loads()).toBe(1);
    // A commit on another connection (as Prisma's, or another process) moves PRAGMA data_version.
    const other = new Database(file);
    other.prepare("INSERT INTO Line (code, name, displayOrder) VALUES ('K1', 'Kept line', 1)").run();
    other.close();
    expect(await c.load("a")).not.toBe(first);
    expect(c.loads()).toBe(2);
  });

  it("loads again after a write on its own connection and after one through Prisma", async () => {
    const c = counting();
    await c.load("a");
    rawDb().prepare("INSERT INTO Line (code, name, displayOrder) VALUES ('K2', 'Raw line', 2)").run();
    await c.load("a");
    expect(c.loads()).toBe(2);
    await db().line.create({ data: { code: "K3", name: "Prisma line", displayOrder: 3 } });
    await c.load("a");
    expect(c.loads()).toBe(3);
  });

  it("keeps at most `size` keys, dropping the least recently used", async () => {
    const c = counting();
    await c.load("a");
    await c.load("b");
    await c.load("a");
    await c.load("c"); // drops b
    await c.load("a");
    expect(c.loads()).toBe(3);
    await c.load("b");
    expect(c.loads()).toBe(4);
  });

  it("keeps neither a failed load nor a value `keep` refuses", async () => {
    let calls = 0;
    const failing = keptUntilWrite(async () => {
      calls++;
      if (calls === 1) throw new RangeError("first load fails");
      return calls;
    });
    await expect(failing("x")).rejects.toThrow("first load fails");
    expect(await failing("x")).toBe(2);
    expect(await failing("x")).toBe(2);

    let built = 0;
    const behind = keptUntilWrite(async () => ({ current: ++built > 1 }), 4, (v) => v.current);
    expect((await behind("p")).current).toBe(false);
    expect((await behind("p")).current).toBe(true);
    await behind("p");
    expect(built).toBe(2);
  });

  it("refuses a size that is not a positive whole number", () => {
    expect(() => keptUntilWrite(async () => 1, 0)).toThrow(RangeError);
  });
});

describe("keptUntilRecordsChange", () => {
  // The temp database has migrations only: add one line, shift and category to write entries against.
  function plantIds(): { line: number; shift: number; category: number } {
    const raw = rawDb();
    raw.prepare("INSERT OR IGNORE INTO Line (code, name, displayOrder) VALUES ('R1', 'Records line', 9)").run();
    raw.prepare("INSERT OR IGNORE INTO Shift (code, name, startTime, endTime, displayOrder) VALUES ('RS', 'Records shift', '06:00', '14:00', 9)").run();
    raw.prepare("INSERT OR IGNORE INTO DefectCategory (code, name, displayOrder) VALUES ('RC', 'Records category', 9)").run();
    const id = (sql: string) => raw.prepare(sql).pluck().get() as number;
    return { line: id("SELECT id FROM Line WHERE code = 'R1'"), shift: id("SELECT id FROM Shift WHERE code = 'RS'"), category: id("SELECT id FROM DefectCategory WHERE code = 'RC'") };
  }

  it("keeps its value through floor entries and sessions, drops it on a master-data, comparison or record change", async () => {
    const ids = plantIds();
    let loads = 0;
    const load = keptUntilRecordsChange(async () => ++loads, 1);
    const first = await load("x");
    const entry = rawDb().prepare(
      "INSERT INTO TallyEntry (productionDate, lineId, shiftId, categoryId, count, idempotencyKey, source, enteredByName) VALUES (?, ?, ?, ?, ?, ?, 'api', 'test')",
    );
    entry.run("2026-11-30", ids.line, ids.shift, ids.category, 3, `kept-${Date.now()}-1`);
    entry.run("2026-11-30", ids.line, ids.shift, ids.category, 2, `kept-${Date.now()}-2`);
    expect(await load("x")).toBe(first);
    expect(loads).toBe(1);
    // A rename in setup (audited in its transaction) changes what pages show.
    const before = recordsStamp();
    await updateMaster("line", ids.line, { fields: { name: "Renamed records line", displayOrder: 9 } }, { userId: null, name: "test", role: "system" });
    expect(recordsStamp()).not.toBe(before);
    expect(await load("x")).toBe(2);
    // A saved comparison's settings.
    rawDb().prepare("INSERT INTO Comparison (code, name, compare, updatedAt) VALUES ('kept-c', 'Kept', 'line', CURRENT_TIMESTAMP)").run();
    expect(await load("x")).toBe(3);
    expect(await load("x")).toBe(3);
  });
});

describe("keptWhileSame", () => {
  it("reuses a build while every input is the very same value, builds again when one is not", async () => {
    let builds = 0;
    const shaped = keptWhileSame<number>(2);
    const windows = [{ start: "2026-11-01" }];
    const build = async () => ++builds;
    expect(await shaped("a", [windows, "stamp-1", null], build)).toBe(1);
    expect(await shaped("a", [windows, "stamp-1", null], build)).toBe(1);
    // Equal but not the same array: a patched scan hands out new arrays.
    expect(await shaped("a", [[{ start: "2026-11-01" }], "stamp-1", null], build)).toBe(2);
    expect(await shaped("a", [windows, "stamp-2", null], build)).toBe(3);
    expect(await shaped("a", [windows, "stamp-2"], build)).toBe(4);
    // Least recently used key dropped beyond the size; a failed build is not kept.
    await shaped("b", [1], build);
    await shaped("c", [1], build);
    expect(await shaped("a", [windows, "stamp-2"], build)).toBe(7);
    let fail = true;
    const flaky = async () => {
      if (fail) throw new RangeError("no scan");
      return 99;
    };
    await expect(shaped("d", [1], flaky)).rejects.toThrow("no scan");
    fail = false;
    expect(await shaped("d", [1], flaky)).toBe(99);
    expect(() => keptWhileSame(0)).toThrow(RangeError);
  });
});
