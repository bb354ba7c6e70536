import { db } from "./client";

/** Master data of the plant, in display order, as plain objects for pages. */
export type PlantMasterData = {
  lines: { id: number; code: string; name: string; active: boolean }[];
  shifts: { id: number; code: string; name: string; startTime: string; endTime: string; active: boolean }[];
  categories: { id: number; code: string; name: string; family: string | null; active: boolean }[];
  products: { id: number; code: string; name: string; active: boolean }[];
};

export async function loadMasterData(): Promise<PlantMasterData> {
  const order = [{ displayOrder: "asc" as const }, { code: "asc" as const }];
  const [lines, shifts, categories, products] = await Promise.all([
    db().line.findMany({ orderBy: order, select: { id: true, code: true, name: true, active: true } }),
    db().shift.findMany({
      orderBy: order,
      select: { id: true, code: true, name: true, startTime: true, endTime: true, active: true },
    }),
    db().defectCategory.findMany({
      orderBy: order,
      select: { id: true, code: true, name: true, family: true, active: true },
    }),
    db().product.findMany({ orderBy: { code: "asc" }, select: { id: true, code: true, name: true, active: true } }),
  ]);
  return { lines, shifts, categories, products };
}

/** Date span and size of the recorded history (current entries only). */
export async function historySpan(): Promise<{ first: string | null; last: string | null; entries: number; defects: number }> {
  const rows = await db().$queryRaw<{ first: string | null; last: string | null; entries: bigint | number; defects: bigint | number | null }[]>`
    SELECT MIN(productionDate) AS first, MAX(productionDate) AS last, COUNT(*) AS entries, SUM(count) AS defects
    FROM TallyEntry e
    WHERE NOT EXISTS (SELECT 1 FROM TallyEntry c WHERE c.supersedesId = e.id)`;
  const row = rows[0];
  return { first: row.first, last: row.last, entries: Number(row.entries), defects: Number(row.defects ?? 0) };
}
