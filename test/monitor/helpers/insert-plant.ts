/**
 * Writes a simulated plant into a migrated Linemix SQLite file with bare prepared
 * statements in one transaction (the fast path the benchmark needs for two million
 * rows; the integration tests use it too, so both read the same shape of data).
 */
import type Database from "better-sqlite3";
import type { TallyRow, UnitsRow } from "@/lib/monitor";

export interface MasterData {
  lines: string[];
  shifts: string[];
  categories: string[];
  families?: Record<string, string>;
}

export interface Ids {
  line: Map<string, number>;
  shift: Map<string, number>;
  category: Map<string, number>;
}

/** Inserts lines, shifts and categories (display order = array order); returns their ids. */
export function insertMasterData(db: Database.Database, master: MasterData): Ids {
  const ids: Ids = { line: new Map(), shift: new Map(), category: new Map() };
  const line = db.prepare("INSERT INTO Line (code, name, displayOrder) VALUES (?, ?, ?)");
  const shift = db.prepare("INSERT INTO Shift (code, name, startTime, endTime, displayOrder) VALUES (?, ?, '06:00', '14:00', ?)");
  const category = db.prepare("INSERT INTO DefectCategory (code, name, family, displayOrder) VALUES (?, ?, ?, ?)");
  db.transaction(() => {
    master.lines.forEach((c, i) => ids.line.set(c, Number(line.run(c, `Line ${c}`, i).lastInsertRowid)));
    master.shifts.forEach((c, i) => ids.shift.set(c, Number(shift.run(c, `Shift ${c}`, i).lastInsertRowid)));
    master.categories.forEach((c, i) =>
      ids.category.set(c, Number(category.run(c, `Category ${c}`, master.families?.[c] ?? null, i).lastInsertRowid)),
    );
  })();
  return ids;
}

let keySerial = 0;

/** Appends tally entries; returns the id of each inserted entry, in order. */
export function insertTallies(db: Database.Database, ids: Ids, rows: readonly TallyRow[], supersedes?: (number | null)[]): number[] {
  const insert = db.prepare(
    `INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, count, source, enteredByName, idempotencyKey, supersedesId)
     VALUES (?, ?, ?, ?, ?, 'import', 'bench', ?, ?)`,
  );
  const out: number[] = [];
  const stamp = `${process.pid}-${Date.now()}`;
  db.transaction(() => {
    rows.forEach((r, i) => {
      const info = insert.run(
        r.date,
        ids.shift.get(r.shift)!,
        ids.line.get(r.line)!,
        ids.category.get(r.category)!,
        r.count,
        `t-${stamp}-${keySerial++}`,
        supersedes?.[i] ?? null,
      );
      out.push(Number(info.lastInsertRowid));
    });
  })();
  return out;
}

/** Appends inspection counts. */
export function insertUnits(db: Database.Database, ids: Ids, rows: readonly UnitsRow[], supersedes?: (number | null)[]): number[] {
  const insert = db.prepare(
    `INSERT INTO InspectionCount (productionDate, shiftId, lineId, units, source, enteredByName, idempotencyKey, supersedesId)
     VALUES (?, ?, ?, ?, 'import', 'bench', ?, ?)`,
  );
  const out: number[] = [];
  const stamp = `${process.pid}-${Date.now()}`;
  db.transaction(() => {
    rows.forEach((r, i) => {
      const info = insert.run(r.date, ids.shift.get(r.shift)!, ids.line.get(r.line)!, r.units, `u-${stamp}-${keySerial++}`, supersedes?.[i] ?? null);
      out.push(Number(info.lastInsertRowid));
    });
  })();
  return out;
}

export interface ComparisonRow {
  code: string;
  name?: string;
  compare: "line" | "shift" | "history";
  lines?: string[] | null;
  shifts?: string[] | null;
  categories?: string[] | null;
  windowDays?: number;
  stepDays?: number;
  alpha?: number;
  adjust?: string;
  minEffect?: number;
  sparse?: string;
  historyWeeks?: number;
}

/** Inserts a saved comparison; returns its id. */
export function insertComparison(db: Database.Database, c: ComparisonRow): number {
  const json = (v: string[] | null | undefined) => (v ? JSON.stringify(v) : null);
  const info = db
    .prepare(
      `INSERT INTO Comparison (code, name, compare, lines, shifts, categories, windowDays, stepDays, alpha, adjust, minEffect, sparse, historyWeeks, updatedAt)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, CURRENT_TIMESTAMP)`,
    )
    .run(
      c.code,
      c.name ?? c.code,
      c.compare,
      json(c.lines),
      json(c.shifts),
      json(c.categories),
      c.windowDays ?? 7,
      c.stepDays ?? 1,
      c.alpha ?? 0.05,
      c.adjust ?? "bh",
      c.minEffect ?? 0,
      c.sparse ?? "auto",
      c.historyWeeks ?? 8,
    );
  return Number(info.lastInsertRowid);
}
