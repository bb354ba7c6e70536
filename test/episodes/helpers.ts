import { rawDb } from "@/lib/db/client";
import { addDays } from "@/lib/dates";

/**
 * A small invented plant for the episode tests: three lines, two shifts, four categories
 * (one with a code that starts like a spreadsheet formula), and daily tallies whose mix
 * is the same on every line except a planted change: line L2 makes four times its usual
 * share of "seal" from PLANT.changeStart for PLANT.changeDays days. Deterministic.
 */
export const PLANT = {
  first: "2026-03-02",
  lines: ["L1", "L2", "L3"],
  shifts: ["A", "B"],
  categories: ["short", "flash", "seal", "=SUM(A1)"],
  weights: [12, 9, 5, 4],
  changeLine: "L2",
  changeCategory: "seal",
  changeStart: "2026-03-30",
  changeDays: 10,
  factor: 4,
};

export interface SeededIds {
  lines: Record<string, number>;
  shifts: Record<string, number>;
  categories: Record<string, number>;
}

let ids: SeededIds | null = null;

/** Master data (once per database). */
export function seedMasterData(): SeededIds {
  const db = rawDb();
  const lines: Record<string, number> = {};
  const shifts: Record<string, number> = {};
  const categories: Record<string, number> = {};
  PLANT.lines.forEach((code, i) => {
    lines[code] = Number(db.prepare("INSERT INTO Line (code, name, displayOrder) VALUES (?, ?, ?)").run(code, `Line ${code.slice(1)}`, i).lastInsertRowid);
  });
  PLANT.shifts.forEach((code, i) => {
    shifts[code] = Number(
      db.prepare("INSERT INTO Shift (code, name, startTime, endTime, displayOrder) VALUES (?, ?, '06:00', '14:00', ?)").run(code, `Shift ${code}`, i).lastInsertRowid,
    );
  });
  PLANT.categories.forEach((code, i) => {
    categories[code] = Number(
      db.prepare("INSERT INTO DefectCategory (code, name, displayOrder) VALUES (?, ?, ?)").run(code, code === "seal" ? "Seal leak" : code, i).lastInsertRowid,
    );
  });
  ids = { lines, shifts, categories };
  return ids;
}

/** The count of one cell on one day (same mix everywhere, plus the planted change). */
export function plantedCount(date: string, line: string, shift: string, category: string): number {
  const j = PLANT.categories.indexOf(category);
  const day = Math.round((Date.parse(date) - Date.parse(PLANT.first)) / 86_400_000);
  const wobble = (day * 7 + PLANT.lines.indexOf(line) * 3 + PLANT.shifts.indexOf(shift) * 5 + j) % 3;
  const base = PLANT.weights[j] + wobble;
  const inChange = line === PLANT.changeLine && category === PLANT.changeCategory && date >= PLANT.changeStart && date < addDays(PLANT.changeStart, PLANT.changeDays);
  return inChange ? base * PLANT.factor : base;
}

/** Tallies for days [fromDay, toDay) counted from PLANT.first. */
export function seedTallies(fromDay: number, toDay: number): void {
  if (!ids) throw new Error("seedMasterData first");
  const db = rawDb();
  const insert = db.prepare(
    `INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, count, source, enteredByName, createdAt, idempotencyKey)
     VALUES (?, ?, ?, ?, ?, 'import', 'test seed', ?, ?)`,
  );
  const run = db.transaction(() => {
    for (let d = fromDay; d < toDay; d++) {
      const date = addDays(PLANT.first, d);
      for (const line of PLANT.lines) {
        for (const shift of PLANT.shifts) {
          for (const category of PLANT.categories) {
            insert.run(date, ids!.shifts[shift], ids!.lines[line], ids!.categories[category], plantedCount(date, line, shift, category), `${date}T20:00:00.000Z`, `t:${date}:${line}:${shift}:${category}`);
          }
        }
      }
    }
  });
  run();
}

/**
 * A correction: a new entry superseding the current one of a cell (the append-only way
 * Linemix fixes a count). Returns the new entry's id.
 */
export function correctTally(date: string, line: string, shift: string, category: string, count: number, reason = "recount"): number {
  if (!ids) throw new Error("seedMasterData first");
  const db = rawDb();
  const current = db
    .prepare(
      `SELECT e.id FROM TallyEntry e
       WHERE e.productionDate = ? AND e.lineId = ? AND e.shiftId = ? AND e.categoryId = ?
         AND NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id)`,
    )
    .get(date, ids.lines[line], ids.shifts[shift], ids.categories[category]) as { id: number } | undefined;
  if (!current) throw new Error(`no current entry for ${date} ${line} ${shift} ${category}`);
  return Number(
    db
      .prepare(
        `INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, count, source, enteredByName, idempotencyKey, supersedesId, correctionReason)
         VALUES (?, ?, ?, ?, ?, 'correction', 'test', ?, ?, ?)`,
      )
      .run(date, ids.shifts[shift], ids.lines[line], ids.categories[category], count, `c:${current.id}:${count}`, current.id, reason).lastInsertRowid,
  );
}

/** Corrects every planted cell of the change back to the usual mix (the change "never happened"). */
export function undoPlantedChange(): void {
  for (let d = 0; d < PLANT.changeDays; d++) {
    const date = addDays(PLANT.changeStart, d);
    for (const shift of PLANT.shifts) {
      const count = plantedCount(date, PLANT.changeLine, shift, PLANT.changeCategory) / PLANT.factor;
      correctTally(date, PLANT.changeLine, shift, PLANT.changeCategory, count, "mis-keyed category");
    }
  }
}

/** An engineer (and an admin) who can act on episodes. */
export function seedUsers(): { engineer: { id: number; name: string }; admin: { id: number; name: string } } {
  const db = rawDb();
  const engineer = Number(db.prepare("INSERT INTO User (username, displayName, role) VALUES ('eng', 'Erin Engineer', 'engineer')").run().lastInsertRowid);
  const admin = Number(db.prepare("INSERT INTO User (username, displayName, role) VALUES ('adm', 'Ada Admin', 'admin')").run().lastInsertRowid);
  return { engineer: { id: engineer, name: "Erin Engineer" }, admin: { id: admin, name: "Ada Admin" } };
}

export function resetSeedIds(): void {
  ids = null;
}
