import type Database from "better-sqlite3";
import { localToday } from "../dates";
import { actorAtLeast, type Actor } from "./actor";
import type { FieldProblem, FloorSheet, InspectionBatch, TallyBatch } from "./schemas";
import { clockLabel, operatorCorrectionWindow, operatorMayCorrectAt } from "./shift-clock";
import type { NewTally, NewUnits, Plan, Refusal } from "./submissions";

/**
 * What a submission stores, worked out inside the write transaction: codes resolved to
 * ids (retired codes refused for new data), sheet state checked, and corrections as new
 * entries that supersede current ones — never an update in place.
 */

type Master = { id: number; code: string; active: number };
type ShiftMaster = Master & { startTime: string; endTime: string };

export class Resolver {
  readonly lines: Map<string, Master>;
  readonly shifts: Map<string, ShiftMaster>;
  readonly categories: Map<string, Master>;
  readonly products: Map<string, Master>;
  readonly shiftsById: Map<number, ShiftMaster>;
  constructor(sqlite: Database.Database) {
    const load = <T extends Master>(sql: string) => new Map((sqlite.prepare(sql).all() as T[]).map((r) => [r.code, r]));
    this.lines = load("SELECT id, code, active FROM Line");
    this.shifts = load<ShiftMaster>("SELECT id, code, active, startTime, endTime FROM Shift");
    this.categories = load("SELECT id, code, active FROM DefectCategory");
    this.products = load("SELECT id, code, active FROM Product");
    this.shiftsById = new Map([...this.shifts.values()].map((s) => [s.id, s]));
  }

  /** The id of an active code, or a problem. */
  resolve(
    kind: "line" | "shift" | "category" | "product",
    code: string,
    problems: FieldProblem[],
    row: number | null,
    field: string,
    allowRetired = false,
  ): number {
    const map = kind === "line" ? this.lines : kind === "shift" ? this.shifts : kind === "category" ? this.categories : this.products;
    const found = map.get(code);
    if (!found) {
      problems.push({ row, field, message: `unknown ${kind} "${code}"` });
      return 0;
    }
    if (!found.active && !allowRetired) {
      problems.push({ row, field, message: `${kind} "${code}" is retired; new counts cannot be recorded for it` });
      return 0;
    }
    return found.id;
  }
}

export function planTallyBatch(sqlite: Database.Database, batch: TallyBatch): Plan | Refusal {
  const r = new Resolver(sqlite);
  const problems: FieldProblem[] = [];
  const tallies: NewTally[] = batch.rows.map((row, i) => ({
    date: row.date,
    shiftId: r.resolve("shift", row.shift, problems, i, "shift"),
    lineId: r.resolve("line", row.line, problems, i, "line"),
    categoryId: r.resolve("category", row.category, problems, i, "category"),
    productId: row.product ? r.resolve("product", row.product, problems, i, "product") : null,
    count: row.count,
    note: row.note?.trim() || null,
    source: "api",
  }));
  if (problems.length) return { status: "invalid", problems };
  return { tallies, units: [] };
}

export function planInspectionBatch(sqlite: Database.Database, batch: InspectionBatch): Plan | Refusal {
  const r = new Resolver(sqlite);
  const problems: FieldProblem[] = [];
  const units: NewUnits[] = batch.rows.map((row, i) => ({
    date: row.date,
    shiftId: r.resolve("shift", row.shift, problems, i, "shift"),
    lineId: r.resolve("line", row.line, problems, i, "line"),
    productId: row.product ? r.resolve("product", row.product, problems, i, "product") : null,
    units: row.units,
    source: "api",
  }));
  if (problems.length) return { status: "invalid", problems };
  return { tallies: [], units };
}

export type SheetRef = { date: string; shiftId: number; lineId: number };

/**
 * A fingerprint of everything recorded on a sheet. Entries are only ever added (a
 * correction is a new entry), so the highest entry ids change with every change.
 */
export function sheetBasis(sqlite: Database.Database, sheet: SheetRef): string {
  const t = sqlite
    .prepare("SELECT COALESCE(MAX(id), 0) AS m FROM TallyEntry WHERE productionDate = ? AND shiftId = ? AND lineId = ?")
    .get(sheet.date, sheet.shiftId, sheet.lineId) as { m: number };
  const u = sqlite
    .prepare("SELECT COALESCE(MAX(id), 0) AS m FROM InspectionCount WHERE productionDate = ? AND shiftId = ? AND lineId = ?")
    .get(sheet.date, sheet.shiftId, sheet.lineId) as { m: number };
  return `t${t.m}.u${u.m}`;
}

export const EMPTY_BASIS = "t0.u0";

type CurrentEntry = { id: number; value: number; enteredById: number | null; enteredByName: string; productId: number | null; note: string | null };

function currentTallies(sqlite: Database.Database, sheet: SheetRef, categoryId: number): CurrentEntry[] {
  return sqlite
    .prepare(
      `SELECT e.id, e.count AS value, e.enteredById, e.enteredByName, e.productId, e.note FROM TallyEntry e
       WHERE e.productionDate = ? AND e.shiftId = ? AND e.lineId = ? AND e.categoryId = ?
       AND NOT EXISTS (SELECT 1 FROM TallyEntry c WHERE c.supersedesId = e.id) ORDER BY e.id`,
    )
    .all(sheet.date, sheet.shiftId, sheet.lineId, categoryId) as CurrentEntry[];
}

function currentUnits(sqlite: Database.Database, sheet: SheetRef): CurrentEntry[] {
  return sqlite
    .prepare(
      `SELECT e.id, e.units AS value, e.enteredById, e.enteredByName, e.productId, NULL AS note FROM InspectionCount e
       WHERE e.productionDate = ? AND e.shiftId = ? AND e.lineId = ?
       AND NOT EXISTS (SELECT 1 FROM InspectionCount c WHERE c.supersedesId = e.id) ORDER BY e.id`,
    )
    .all(sheet.date, sheet.shiftId, sheet.lineId) as CurrentEntry[];
}

/**
 * Which current entries to supersede, and with what, so the cell's total becomes
 * `target`: the newest entries first, as few as possible; the oldest superseded entry
 * carries what is left and the others become 0. Returns [] when the total is already right.
 */
export function minimalCorrection(entries: { id: number; value: number }[], target: number): { id: number; from: number; to: number }[] {
  const total = entries.reduce((s, e) => s + e.value, 0);
  if (total === target) return [];
  const chosen: { id: number; value: number }[] = [];
  let untouched = total;
  for (let i = entries.length - 1; i >= 0; i -= 1) {
    chosen.push(entries[i]);
    untouched -= entries[i].value;
    if (untouched <= target) break;
  }
  // chosen is newest first; the last one chosen (the oldest) carries the remainder.
  return chosen.map((e, i) => ({ id: e.id, from: e.value, to: i === chosen.length - 1 ? target - untouched : 0 }));
}

/** Operators: own entries of a shift inside its correction window. Engineers and admins: any. Tokens: none. */
export function correctionPermission(
  actor: Actor,
  entry: { enteredById: number | null; enteredByName: string },
  shift: { startTime: string; endTime: string; code: string },
  date: string,
  now: Date,
): string | null {
  if (actor.role === "system") return "API tokens cannot correct entries; a person corrects them in Linemix, with a reason.";
  if (actorAtLeast(actor, "engineer")) return null;
  if (entry.enteredById === null || entry.enteredById !== actor.userId) {
    return `This count was recorded by ${entry.enteredByName}; only they (during the shift) or an engineer can correct it.`;
  }
  if (!operatorMayCorrectAt(shift, date, now)) {
    const { opens, closes } = operatorCorrectionWindow(shift, date);
    return (
      `Operators can correct their own counts of ${date} ${shift.code} from ${clockLabel(opens)} until ${clockLabel(closes)} ` +
      `(the end of the shift plus the hand-over); ask an engineer to correct it now.`
    );
  }
  return null;
}

export function planFloorSheet(sqlite: Database.Database, actor: Actor, sheet: FloorSheet, now: Date): Plan | Refusal {
  const r = new Resolver(sqlite);
  const problems: FieldProblem[] = [];
  // A correction may touch what was recorded for codes retired since; new counts may not.
  const correcting = sheet.mode === "correct";
  const shiftId = r.resolve("shift", sheet.shift, problems, null, "shift", correcting);
  const lineId = r.resolve("line", sheet.line, problems, null, "line", correcting);
  const productId = sheet.product ? r.resolve("product", sheet.product, problems, null, "product", correcting) : null;
  if (sheet.date > localToday(now)) problems.push({ row: null, field: "date", message: `${sheet.date} is in the future` });
  const categoryIds = sheet.counts.map((c, i) => r.resolve("category", c.category, problems, i, "category", correcting));
  if (problems.length) return { status: "invalid", problems };

  const ref: SheetRef = { date: sheet.date, shiftId, lineId };
  const basis = sheetBasis(sqlite, ref);
  if (sheet.mode !== "add" && basis !== sheet.basis) {
    return {
      status: "stale",
      message:
        sheet.mode === "new"
          ? "Someone recorded this sheet while you were filling it in. Your numbers are kept: check what is recorded now, then record yours as additional or as a correction."
          : "This sheet changed since you opened it. Your numbers are kept: check what is recorded now before correcting.",
    };
  }
  const note = sheet.note?.trim() || null;
  const tallies: NewTally[] = [];
  const units: NewUnits[] = [];
  const base = { date: sheet.date, shiftId, lineId };

  if (sheet.mode === "new" || sheet.mode === "add") {
    sheet.counts.forEach((c, i) => {
      if (sheet.mode === "add" && c.count === 0) return;
      tallies.push({ ...base, categoryId: categoryIds[i], productId, count: c.count, note, source: "floor" });
    });
    if (sheet.units !== null && sheet.units !== undefined && (sheet.mode === "new" || sheet.units > 0)) {
      units.push({ ...base, productId, units: sheet.units, source: "floor" });
    }
    if (tallies.length === 0 && units.length === 0) {
      return { status: "invalid", problems: [{ row: null, field: "counts", message: "nothing to add: every count is 0" }] };
    }
    return { tallies, units };
  }

  // Correct: the numbers are the corrected totals.
  const shift = r.shiftsById.get(shiftId)!;
  const reason = sheet.reason!.trim();
  const refusals: string[] = [];
  sheet.counts.forEach((c, i) => {
    const entries = currentTallies(sqlite, ref, categoryIds[i]);
    if (entries.length === 0) {
      if (c.count > 0 && !r.categories.get(c.category)?.active) {
        refusals.push(`${c.category}: the category is retired; new counts cannot be recorded for it.`);
      } else if (c.count > 0) tallies.push({ ...base, categoryId: categoryIds[i], productId, count: c.count, note, source: "floor" });
      return;
    }
    for (const change of minimalCorrection(entries, c.count)) {
      const entry = entries.find((e) => e.id === change.id)!;
      const refusal = correctionPermission(actor, entry, shift, sheet.date, now);
      if (refusal) refusals.push(`${c.category}: ${refusal}`);
      tallies.push({
        ...base,
        categoryId: categoryIds[i],
        productId: entry.productId,
        count: change.to,
        note: entry.note,
        source: "correction",
        supersedes: { id: entry.id, count: change.from },
        reason,
      });
    }
  });
  if (sheet.units !== null && sheet.units !== undefined) {
    const entries = currentUnits(sqlite, ref);
    if (entries.length === 0) {
      if (sheet.units > 0) units.push({ ...base, productId, units: sheet.units, source: "floor" });
    } else {
      for (const change of minimalCorrection(entries, sheet.units)) {
        const entry = entries.find((e) => e.id === change.id)!;
        const refusal = correctionPermission(actor, entry, shift, sheet.date, now);
        if (refusal) refusals.push(`units inspected: ${refusal}`);
        units.push({ ...base, productId: entry.productId, units: change.to, source: "correction", supersedes: { id: entry.id, units: change.from }, reason });
      }
    }
  }
  if (refusals.length) return { status: "forbidden", message: [...new Set(refusals)].join(" ") };
  if (tallies.length === 0 && units.length === 0) {
    return { status: "invalid", problems: [{ row: null, field: "counts", message: "nothing changed: every number equals what is recorded" }] };
  }
  return { tallies, units };
}

export type SingleCorrection = { kind: "tally" | "units"; entryId: number; value: number; reason: string };

/** One entry superseded by a corrected value (corrections page). */
export function planSingleCorrection(sqlite: Database.Database, actor: Actor, c: SingleCorrection, now: Date): Plan | Refusal {
  const table = c.kind === "tally" ? "TallyEntry" : "InspectionCount";
  const valueColumn = c.kind === "tally" ? "count" : "units";
  const entry = sqlite
    .prepare(
      `SELECT e.*, e.${valueColumn} AS value, (SELECT n.id FROM ${table} n WHERE n.supersedesId = e.id) AS supersededById FROM ${table} e WHERE e.id = ?`,
    )
    .get(c.entryId) as
    | (CurrentEntry & { productionDate: string; shiftId: number; lineId: number; categoryId?: number; supersededById: number | null })
    | undefined;
  if (!entry) return { status: "invalid", problems: [{ row: null, field: "entryId", message: `no entry #${c.entryId}` }] };
  if (entry.supersededById !== null) {
    return { status: "stale", message: `Entry #${entry.id} was already corrected by entry #${entry.supersededById}; correct the current one.` };
  }
  if (entry.value === c.value) {
    return { status: "invalid", problems: [{ row: null, field: "value", message: "the corrected value equals the recorded one" }] };
  }
  const shift = new Resolver(sqlite).shiftsById.get(entry.shiftId)!;
  const refusal = correctionPermission(actor, entry, shift, entry.productionDate, now);
  if (refusal) return { status: "forbidden", message: refusal };
  const base = { date: entry.productionDate, shiftId: entry.shiftId, lineId: entry.lineId, productId: entry.productId, source: "correction" as const, reason: c.reason.trim() };
  if (c.kind === "tally") {
    return { tallies: [{ ...base, categoryId: entry.categoryId!, count: c.value, note: entry.note, supersedes: { id: entry.id, count: entry.value } }], units: [] };
  }
  return { tallies: [], units: [{ ...base, units: c.value, supersedes: { id: entry.id, units: entry.value } }] };
}
