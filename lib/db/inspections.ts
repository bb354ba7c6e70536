import type Database from "better-sqlite3";
import { sqliteTime } from "../intake/audit";
import { rawDb } from "./client";
import type { TallyFilter } from "./tallies";

/** Inspected-units queries; corrected like tallies (current = not superseded). */

export const CURRENT_UNITS = "NOT EXISTS (SELECT 1 FROM InspectionCount c WHERE c.supersedesId = e.id)";

export type UnitsEntryView = {
  id: number;
  productionDate: string;
  shift: string;
  line: string;
  product: string | null;
  units: number;
  source: string;
  enteredById: number | null;
  enteredByName: string;
  createdAt: string;
  supersedesId: number | null;
  supersededById: number | null;
  correctionReason: string | null;
  importBatchId: number | null;
};

const SELECT = `
  SELECT e.id, e.productionDate, s.code AS shift, l.code AS line, p.code AS product, e.units, e.source,
         e.enteredById, e.enteredByName, e.createdAt, e.supersedesId,
         (SELECT n.id FROM InspectionCount n WHERE n.supersedesId = e.id) AS supersededById,
         e.correctionReason, e.importBatchId
  FROM InspectionCount e
  JOIN Line l ON l.id = e.lineId
  JOIN Shift s ON s.id = e.shiftId
  LEFT JOIN Product p ON p.id = e.productId`;

const fix = (r: UnitsEntryView): UnitsEntryView => ({ ...r, createdAt: sqliteTime(r.createdAt).toISOString() });

/** Summed current units per date, shift and line as [date, shift, line, units] tuples. */
export function iterateUnitTotals(filter: TallyFilter = {}, sqlite: Database.Database = rawDb()): IterableIterator<[string, string, string, number]> {
  const clauses: string[] = [];
  const params: string[] = [];
  if (filter.from) {
    clauses.push("e.productionDate >= ?");
    params.push(filter.from);
  }
  if (filter.to) {
    clauses.push("e.productionDate <= ?");
    params.push(filter.to);
  }
  if (filter.lineCodes?.length) {
    clauses.push(`l.code IN (${filter.lineCodes.map(() => "?").join(",")})`);
    params.push(...filter.lineCodes);
  }
  return sqlite
    .prepare(
      `SELECT e.productionDate, s.code, l.code, SUM(e.units)
       FROM InspectionCount e JOIN Line l ON l.id = e.lineId JOIN Shift s ON s.id = e.shiftId
       WHERE ${CURRENT_UNITS} ${clauses.length ? `AND ${clauses.join(" AND ")}` : ""}
       GROUP BY e.productionDate, e.lineId, e.shiftId
       ORDER BY e.productionDate, e.lineId, e.shiftId`,
    )
    .raw(true)
    .iterate(...params) as IterableIterator<[string, string, string, number]>;
}

export function currentSheetUnits(sheet: { date: string; shiftId: number; lineId: number }, sqlite: Database.Database = rawDb()): UnitsEntryView[] {
  return (
    sqlite
      .prepare(`${SELECT} WHERE e.productionDate = ? AND e.shiftId = ? AND e.lineId = ? AND ${CURRENT_UNITS} ORDER BY e.id`)
      .all(sheet.date, sheet.shiftId, sheet.lineId) as UnitsEntryView[]
  ).map(fix);
}

/** Every units entry of one sheet, superseded or not, oldest first. */
export function unitsHistory(sheet: { date: string; shiftId: number; lineId: number }, sqlite: Database.Database = rawDb()): UnitsEntryView[] {
  return (
    sqlite
      .prepare(`${SELECT} WHERE e.productionDate = ? AND e.shiftId = ? AND e.lineId = ? ORDER BY e.id`)
      .all(sheet.date, sheet.shiftId, sheet.lineId) as UnitsEntryView[]
  ).map(fix);
}

export function getUnitsEntry(id: number, sqlite: Database.Database = rawDb()): UnitsEntryView | null {
  const row = sqlite.prepare(`${SELECT} WHERE e.id = ?`).get(id) as UnitsEntryView | undefined;
  return row ? fix(row) : null;
}
