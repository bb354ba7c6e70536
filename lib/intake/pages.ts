import type Database from "better-sqlite3";
import { rawDb } from "../db/client";
import { isIsoDate, localToday } from "../dates";
import { cellHistory, currentSheetEntries, getEntry, type EntryView } from "../db/tallies";
import { currentSheetUnits, getUnitsEntry, unitsHistory, type UnitsEntryView } from "../db/inspections";
import { actorAtLeast, type Actor } from "./actor";
import { localStamp } from "./format";
import { correctionPermission } from "./plans";
import { clockLabel, operatorCorrectionWindow, shiftAt } from "./shift-clock";
import { loadSheet, type SheetView } from "./sheet";

/**
 * Plain data for the intake pages, worked out here so the components only render:
 * which sheet to show (defaults: the running shift and its production date), the rows
 * of the corrections page with who may correct what, and cell histories.
 */

type LineOption = { id: number; code: string; name: string };
type ShiftOption = { id: number; code: string; name: string; startTime: string; endTime: string };

export type SheetChoice = {
  lines: LineOption[];
  shifts: ShiftOption[];
  products: { code: string; name: string }[];
  line: LineOption | null;
  shift: ShiftOption | null;
  date: string;
  /** The shift running now (or last ended) and its production date, for the "now" hint. */
  now: { shift: string; date: string; running: boolean; startedYesterday: boolean } | null;
  /** True when the URL chose the line (the sheet was opened on purpose). */
  explicit: boolean;
  problems: string[];
};

function activeOptions(sqlite: Database.Database) {
  const lines = sqlite.prepare("SELECT id, code, name FROM Line WHERE active = 1 ORDER BY displayOrder, code").all() as LineOption[];
  const shifts = sqlite.prepare("SELECT id, code, name, startTime, endTime FROM Shift WHERE active = 1 ORDER BY displayOrder, code").all() as ShiftOption[];
  const products = sqlite.prepare("SELECT code, name FROM Product WHERE active = 1 ORDER BY code").all() as { code: string; name: string }[];
  return { lines, shifts, products };
}

/** The sheet the URL asks for, with defaults and problems for unknown values. */
export function chooseSheet(
  params: { line?: string; shift?: string; date?: string },
  now = new Date(),
  sqlite: Database.Database = rawDb(),
): SheetChoice {
  const { lines, shifts, products } = activeOptions(sqlite);
  const problems: string[] = [];
  const running = shiftAt(shifts, now);
  let line = lines[0] ?? null;
  if (params.line) {
    const found = lines.find((l) => l.code === params.line);
    if (found) line = found;
    else problems.push(`There is no active line "${params.line}".`);
  }
  let shift = running?.shift ?? shifts[0] ?? null;
  if (params.shift) {
    const found = shifts.find((s) => s.code === params.shift);
    if (found) shift = found;
    else problems.push(`There is no active shift "${params.shift}".`);
  }
  let date = running?.productionDate ?? localToday(now);
  if (params.date) {
    if (!isIsoDate(params.date)) problems.push(`"${params.date}" is not a date (YYYY-MM-DD).`);
    else if (params.date > localToday(now)) problems.push(`${params.date} is in the future.`);
    else date = params.date;
  }
  return {
    lines,
    shifts,
    products,
    line,
    shift,
    date,
    now: running ? { shift: running.shift.code, date: running.productionDate, running: running.running, startedYesterday: running.productionDate !== localToday(now) } : null,
    explicit: Boolean(params.line && !problems.length),
    problems,
  };
}

export type EntryPage = SheetChoice & { sheet: SheetView | null; correctionHint: string | null; mayCorrect: boolean };

export function entryPageData(params: { line?: string; shift?: string; date?: string }, actor: Actor, now = new Date()): EntryPage {
  const choice = chooseSheet(params, now);
  const sheet = choice.line && choice.shift ? loadSheet(choice.date, choice.shift.id, choice.line.id) : null;
  let correctionHint: string | null = null;
  let mayCorrect = false;
  if (sheet && choice.shift) {
    if (actorAtLeast(actor, "engineer")) {
      mayCorrect = true;
      correctionHint = "As an engineer you can correct any count; each correction keeps the original and asks for a reason.";
    } else {
      const { opens, closes } = operatorCorrectionWindow(choice.shift, choice.date);
      mayCorrect = now >= opens && now < closes;
      correctionHint = mayCorrect
        ? `You can correct your own counts of this sheet until ${clockLabel(closes)}; counts recorded by others need an engineer.`
        : `Operators can correct a shift's counts from its start until ${clockLabel(closes)}; an engineer can correct them now.`;
    }
  }
  return { ...choice, sheet, correctionHint, mayCorrect };
}

export type CorrectionRow = {
  kind: "tally" | "units";
  id: number;
  label: string;
  category: string | null;
  value: number;
  source: string;
  by: string;
  at: string;
  note: string | null;
  reason: string | null;
  canCorrect: boolean;
  why: string | null;
};

export type CorrectionsPage = SheetChoice & { rows: CorrectionRow[]; canSeeHistory: boolean };

export function correctionsPageData(params: { line?: string; shift?: string; date?: string }, actor: Actor, now = new Date()): CorrectionsPage {
  const choice = chooseSheet(params, now);
  const rows: CorrectionRow[] = [];
  if (choice.line && choice.shift) {
    const ref = { date: choice.date, shiftId: choice.shift.id, lineId: choice.line.id };
    const shift = choice.shift;
    const permission = (e: { enteredById: number | null; enteredByName: string }) => correctionPermission(actor, e, shift, choice.date, now);
    for (const e of currentSheetEntries(ref)) {
      const why = permission(e);
      rows.push({
        kind: "tally",
        id: e.id,
        label: e.categoryName,
        category: e.category,
        value: e.count,
        source: e.source,
        by: e.enteredByName,
        at: localStamp(e.createdAt),
        note: e.note,
        reason: e.correctionReason,
        canCorrect: why === null,
        why,
      });
    }
    for (const u of currentSheetUnits(ref)) {
      const why = permission(u);
      rows.push({
        kind: "units",
        id: u.id,
        label: "Units inspected",
        category: null,
        value: u.units,
        source: u.source,
        by: u.enteredByName,
        at: localStamp(u.createdAt),
        note: null,
        reason: u.correctionReason,
        canCorrect: why === null,
        why,
      });
    }
  }
  return { ...choice, rows, canSeeHistory: actorAtLeast(actor, "engineer") };
}

export type HistoryRow = {
  id: number;
  value: number;
  source: string;
  by: string;
  at: string;
  status: "current" | "superseded";
  supersededById: number | null;
  supersedesId: number | null;
  reason: string | null;
  note: string | null;
  importBatchId: number | null;
  product: string | null;
};

export type HistoryPage = {
  lines: LineOption[];
  shifts: ShiftOption[];
  categories: { id: number; code: string; name: string; active: boolean }[];
  date: string | null;
  line: LineOption | null;
  shift: ShiftOption | null;
  category: { id: number; code: string; name: string } | null;
  problems: string[];
  /** The cell's entries, oldest first (when a category is chosen). */
  entries: HistoryRow[] | null;
  currentTotal: number | null;
  /** The sheet's categories with current totals and entry counts (when no category is chosen). */
  sheet: { code: string; name: string; total: number; entries: number; superseded: number }[] | null;
  units: HistoryRow[] | null;
};

function historyRow(e: EntryView | UnitsEntryView): HistoryRow {
  return {
    id: e.id,
    value: "count" in e ? e.count : e.units,
    source: e.source,
    by: e.enteredByName,
    at: localStamp(e.createdAt),
    status: e.supersededById === null ? "current" : "superseded",
    supersededById: e.supersededById,
    supersedesId: e.supersedesId,
    reason: e.correctionReason,
    note: "note" in e ? e.note : null,
    importBatchId: e.importBatchId,
    product: e.product,
  };
}

/** Cell history (date × shift × line × category): every entry, superseded or not. */
export function historyPageData(params: { date?: string; shift?: string; line?: string; category?: string }, sqlite: Database.Database = rawDb()): HistoryPage {
  const lines = sqlite.prepare("SELECT id, code, name FROM Line ORDER BY displayOrder, code").all() as LineOption[];
  const shifts = sqlite.prepare("SELECT id, code, name, startTime, endTime FROM Shift ORDER BY displayOrder, code").all() as ShiftOption[];
  const categories = (
    sqlite.prepare("SELECT id, code, name, active FROM DefectCategory ORDER BY displayOrder, code").all() as { id: number; code: string; name: string; active: number }[]
  ).map((c) => ({ ...c, active: Boolean(c.active) }));
  const problems: string[] = [];
  const date = params.date && isIsoDate(params.date) ? params.date : null;
  if (params.date && !date) problems.push(`"${params.date}" is not a date (YYYY-MM-DD).`);
  const line = lines.find((l) => l.code === params.line) ?? null;
  if (params.line && !line) problems.push(`There is no line "${params.line}".`);
  const shift = shifts.find((s) => s.code === params.shift) ?? null;
  if (params.shift && !shift) problems.push(`There is no shift "${params.shift}".`);
  const category = categories.find((c) => c.code === params.category) ?? null;
  if (params.category && !category) problems.push(`There is no category "${params.category}".`);
  const page: HistoryPage = { lines, shifts, categories, date, line, shift, category, problems, entries: null, currentTotal: null, sheet: null, units: null };
  if (!date || !line || !shift) return page;
  const ref = { date, shiftId: shift.id, lineId: line.id };
  if (category) {
    const entries = cellHistory({ ...ref, categoryId: category.id }, sqlite).map(historyRow);
    page.entries = entries;
    page.currentTotal = entries.filter((e) => e.status === "current").reduce((s, e) => s + e.value, 0);
  } else {
    const rows = sqlite
      .prepare(
        `SELECT c.code, c.name,
                SUM(CASE WHEN NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id) THEN e.count ELSE 0 END) AS total,
                COUNT(*) AS entries,
                SUM(CASE WHEN EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id) THEN 1 ELSE 0 END) AS superseded
         FROM TallyEntry e JOIN DefectCategory c ON c.id = e.categoryId
         WHERE e.productionDate = ? AND e.shiftId = ? AND e.lineId = ?
         GROUP BY c.id ORDER BY c.displayOrder, c.code`,
      )
      .all(date, shift.id, line.id) as { code: string; name: string; total: number; entries: number; superseded: number }[];
    page.sheet = rows;
    page.units = unitsHistory(ref, sqlite).map(historyRow);
  }
  return page;
}

/** "Flash 2 → 5 (entry #12 replaces #7; reason: …)" for the marker t12 / u12 after a correction. */
export function describeCorrection(marker: string | undefined): string | null {
  const m = marker ? /^([tu])(\d{1,12})$/.exec(marker) : null;
  if (!m) return null;
  const id = Number(m[2]);
  if (m[1] === "t") {
    const e = getEntry(id);
    if (!e || e.supersedesId === null) return null;
    const old = getEntry(e.supersedesId);
    return `${e.categoryName} ${old?.count ?? "?"} → ${e.count} (entry #${e.id} replaces #${e.supersedesId}; reason: ${e.correctionReason ?? ""})`;
  }
  const u = getUnitsEntry(id);
  if (!u || u.supersedesId === null) return null;
  const old = getUnitsEntry(u.supersedesId);
  return `units inspected ${old?.units ?? "?"} → ${u.units} (entry #${u.id} replaces #${u.supersedesId}; reason: ${u.correctionReason ?? ""})`;
}
