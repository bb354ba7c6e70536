import type Database from "better-sqlite3";
import { sqliteTime } from "../intake/audit";
import { rawDb } from "./client";

/**
 * Tally queries on the raw connection. "Current" entries are those no other entry
 * supersedes; the tally of a cell (date × shift × line × category) is the sum of its
 * current entries. Other modules may reuse iterateCellTotals / listCellTotals.
 */

export const CURRENT_TALLY = "NOT EXISTS (SELECT 1 FROM TallyEntry c WHERE c.supersedesId = e.id)";

export type TallyFilter = { from?: string | null; to?: string | null; lineCodes?: string[] | null };

export type CellTotal = { date: string; shift: string; line: string; category: string; count: number };

function filterSql(filter: TallyFilter, alias = "e"): { where: string; params: (string | number)[] } {
  const clauses: string[] = [];
  const params: (string | number)[] = [];
  if (filter.from) {
    clauses.push(`${alias}.productionDate >= ?`);
    params.push(filter.from);
  }
  if (filter.to) {
    clauses.push(`${alias}.productionDate <= ?`);
    params.push(filter.to);
  }
  if (filter.lineCodes && filter.lineCodes.length) {
    clauses.push(`l.code IN (${filter.lineCodes.map(() => "?").join(",")})`);
    params.push(...filter.lineCodes);
  }
  return { where: clauses.length ? `AND ${clauses.join(" AND ")}` : "", params };
}

/**
 * Summed current count per date, shift, line and category as [date, shift, line,
 * category, count] tuples, streamed from SQLite in (date, line, shift, category) order.
 */
export function iterateCellTotals(filter: TallyFilter = {}, sqlite: Database.Database = rawDb()): IterableIterator<[string, string, string, string, number]> {
  const { where, params } = filterSql(filter);
  const statement = sqlite
    .prepare(
      `SELECT e.productionDate, s.code, l.code, c.code, SUM(e.count)
       FROM TallyEntry e
       JOIN Line l ON l.id = e.lineId
       JOIN Shift s ON s.id = e.shiftId
       JOIN DefectCategory c ON c.id = e.categoryId
       WHERE ${CURRENT_TALLY} ${where}
       GROUP BY e.productionDate, e.lineId, e.shiftId, e.categoryId
       ORDER BY e.productionDate, e.lineId, e.shiftId, e.categoryId`,
    )
    .raw(true);
  return statement.iterate(...params) as IterableIterator<[string, string, string, string, number]>;
}

/** The same as objects, at most `limit` of them (API responses). */
export function listCellTotals(filter: TallyFilter, limit: number, sqlite: Database.Database = rawDb()): { rows: CellTotal[]; truncated: boolean } {
  const rows: CellTotal[] = [];
  for (const [date, shift, line, category, count] of iterateCellTotals(filter, sqlite)) {
    if (rows.length === limit) return { rows, truncated: true };
    rows.push({ date, shift, line, category, count });
  }
  return { rows, truncated: false };
}

export type EntryView = {
  id: number;
  productionDate: string;
  shift: string;
  line: string;
  category: string;
  categoryName: string;
  product: string | null;
  count: number;
  source: string;
  note: string | null;
  enteredById: number | null;
  enteredByName: string;
  createdAt: string;
  supersedesId: number | null;
  supersededById: number | null;
  correctionReason: string | null;
  importBatchId: number | null;
};

const ENTRY_SELECT = `
  SELECT e.id, e.productionDate, s.code AS shift, l.code AS line, c.code AS category, c.name AS categoryName,
         p.code AS product, e.count, e.source, e.note, e.enteredById, e.enteredByName, e.createdAt,
         e.supersedesId, (SELECT n.id FROM TallyEntry n WHERE n.supersedesId = e.id) AS supersededById,
         e.correctionReason, e.importBatchId
  FROM TallyEntry e
  JOIN Line l ON l.id = e.lineId
  JOIN Shift s ON s.id = e.shiftId
  JOIN DefectCategory c ON c.id = e.categoryId
  LEFT JOIN Product p ON p.id = e.productId`;

function toEntry(row: EntryView & { createdAt: string }): EntryView {
  return { ...row, createdAt: sqliteTime(row.createdAt).toISOString() };
}

/** Every entry of one cell, superseded or not, oldest first. */
export function cellHistory(
  cell: { date: string; shiftId: number; lineId: number; categoryId: number },
  sqlite: Database.Database = rawDb(),
): EntryView[] {
  const rows = sqlite
    .prepare(`${ENTRY_SELECT} WHERE e.productionDate = ? AND e.shiftId = ? AND e.lineId = ? AND e.categoryId = ? ORDER BY e.id`)
    .all(cell.date, cell.shiftId, cell.lineId, cell.categoryId) as EntryView[];
  return rows.map(toEntry);
}

export function getEntry(id: number, sqlite: Database.Database = rawDb()): EntryView | null {
  const row = sqlite.prepare(`${ENTRY_SELECT} WHERE e.id = ?`).get(id) as EntryView | undefined;
  return row ? toEntry(row) : null;
}

/** Current entries of one sheet (date × shift × line), by category display order then id. */
export function currentSheetEntries(
  sheet: { date: string; shiftId: number; lineId: number },
  sqlite: Database.Database = rawDb(),
): EntryView[] {
  const rows = sqlite
    .prepare(
      `${ENTRY_SELECT} WHERE e.productionDate = ? AND e.shiftId = ? AND e.lineId = ? AND ${CURRENT_TALLY}
       ORDER BY c.displayOrder, c.code, e.id`,
    )
    .all(sheet.date, sheet.shiftId, sheet.lineId) as EntryView[];
  return rows.map(toEntry);
}

export type SheetTotals = {
  /** category code → current total */
  counts: Record<string, number>;
  defects: number;
  entries: number;
  /** Who recorded the sheet, newest first: distinct names with their latest time. */
  recordedBy: { name: string; at: string }[];
};

/** Current totals of one sheet per category. */
export function sheetTotals(sheet: { date: string; shiftId: number; lineId: number }, sqlite: Database.Database = rawDb()): SheetTotals {
  const entries = currentSheetEntries(sheet, sqlite);
  const counts: Record<string, number> = {};
  let defects = 0;
  const by = new Map<string, string>();
  for (const e of entries) {
    counts[e.category] = (counts[e.category] ?? 0) + e.count;
    defects += e.count;
    const prev = by.get(e.enteredByName);
    if (!prev || e.createdAt > prev) by.set(e.enteredByName, e.createdAt);
  }
  const recordedBy = [...by].map(([name, at]) => ({ name, at })).sort((a, b) => b.at.localeCompare(a.at));
  return { counts, defects, entries: entries.length, recordedBy };
}

/** Recent entries anywhere (newest first), for the corrections page. */
export function recentEntries(
  filter: { date?: string; shiftId?: number; lineId?: number; enteredById?: number; limit?: number },
  sqlite: Database.Database = rawDb(),
): EntryView[] {
  const clauses: string[] = [CURRENT_TALLY];
  const params: (string | number)[] = [];
  if (filter.date) {
    clauses.push("e.productionDate = ?");
    params.push(filter.date);
  }
  if (filter.shiftId) {
    clauses.push("e.shiftId = ?");
    params.push(filter.shiftId);
  }
  if (filter.lineId) {
    clauses.push("e.lineId = ?");
    params.push(filter.lineId);
  }
  if (filter.enteredById) {
    clauses.push("e.enteredById = ?");
    params.push(filter.enteredById);
  }
  const rows = sqlite
    .prepare(`${ENTRY_SELECT} WHERE ${clauses.join(" AND ")} ORDER BY e.id DESC LIMIT ?`)
    .all(...params, filter.limit ?? 200) as EntryView[];
  return rows.map(toEntry);
}
