import { db, rawDb } from "@/lib/db/client";
import { createApiToken } from "@/lib/auth/api-tokens";
import type { Actor } from "@/lib/intake/actor";

/**
 * A small invented plant for the intake tests: two lines, three shifts (one across
 * midnight), four categories (one retired), one product, people of each role and
 * API tokens of each scope.
 */
export type Plant = {
  lines: Record<string, number>;
  shifts: Record<string, number>;
  categories: Record<string, number>;
  products: Record<string, number>;
  users: { operator: Actor; operator2: Actor; engineer: Actor; admin: Actor };
  tokens: { write: string; read: string; both: string };
};

export async function seedPlant(): Promise<Plant> {
  const s = rawDb();
  const lines: Record<string, number> = {};
  const shifts: Record<string, number> = {};
  const categories: Record<string, number> = {};
  const products: Record<string, number> = {};
  for (const [i, code] of ["L1", "L2"].entries()) {
    lines[code] = Number(s.prepare("INSERT INTO Line (code, name, displayOrder) VALUES (?, ?, ?)").run(code, `Line ${code}`, i).lastInsertRowid);
  }
  for (const [i, [code, start, end]] of [
    ["A", "06:00", "14:00"],
    ["B", "14:00", "22:00"],
    ["N", "22:00", "06:00"],
  ].entries()) {
    shifts[code] = Number(
      s.prepare("INSERT INTO Shift (code, name, startTime, endTime, displayOrder) VALUES (?, ?, ?, ?, ?)").run(code, `Shift ${code}`, start, end, i).lastInsertRowid,
    );
  }
  for (const [i, [code, active]] of [
    ["scratch", 1],
    ["dent", 1],
    ["crack", 1],
    ["old", 0],
  ].entries()) {
    categories[code as string] = Number(
      s.prepare("INSERT INTO DefectCategory (code, name, family, active, displayOrder) VALUES (?, ?, 'surface', ?, ?)").run(code, `Cat ${code}`, active, i)
        .lastInsertRowid,
    );
  }
  products.PX = Number(s.prepare("INSERT INTO Product (code, name) VALUES ('PX', 'Product X')").run().lastInsertRowid);
  const mk = async (username: string, role: string) => {
    const u = await db().user.create({ data: { username, displayName: `${username} (test)`, role } });
    return { userId: u.id, name: u.displayName, role } as Actor;
  };
  const users = {
    operator: await mk("op1", "operator"),
    operator2: await mk("op2", "operator"),
    engineer: await mk("eng", "engineer"),
    admin: await mk("adm", "admin"),
  };
  const tokens = {
    write: (await createApiToken("gateway", ["tallies:write"], users.admin.userId!)).token,
    read: (await createApiToken("reports", ["analysis:read"], users.admin.userId!)).token,
    both: (await createApiToken("both", ["tallies:write", "analysis:read"], users.admin.userId!)).token,
  };
  return { lines, shifts, categories, products, users, tokens };
}

export const system: Actor = { userId: null, name: "test", role: "system" };

export function count(sql: string, ...params: unknown[]): number {
  return (rawDb().prepare(sql).get(...params) as { n: number }).n;
}

/** Current total of a cell by codes. */
export function cellTotal(date: string, shift: string, line: string, category: string): number {
  return count(
    `SELECT COALESCE(SUM(e.count), 0) AS n FROM TallyEntry e JOIN Shift s ON s.id = e.shiftId JOIN Line l ON l.id = e.lineId
     JOIN DefectCategory c ON c.id = e.categoryId
     WHERE e.productionDate = ? AND s.code = ? AND l.code = ? AND c.code = ?
     AND NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id)`,
    date,
    shift,
    line,
    category,
  );
}
