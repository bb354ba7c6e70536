import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db, rawDb } from "@/lib/db/client";
import { keptUntilWrite } from "@/lib/review/kept";
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
