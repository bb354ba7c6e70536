import type Database from "better-sqlite3";
import { rawDb } from "../db/client";
import { currentSheetUnits } from "../db/inspections";
import { currentSheetEntries } from "../db/tallies";
import { sheetBasis } from "./plans";

/**
 * What the floor sheet shows for one line, shift and date: every active category (and
 * any retired one that already has counts on this sheet) with what is recorded, the
 * units, who recorded them, and the basis fingerprint the sheet sends back.
 */

export type SheetCategory = { code: string; name: string; family: string | null; active: boolean; recorded: number; entries: number };

export type SheetView = {
  date: string;
  shift: { id: number; code: string; name: string; startTime: string; endTime: string };
  line: { id: number; code: string; name: string };
  categories: SheetCategory[];
  recordedDefects: number;
  recordedUnits: number | null;
  unitsEntries: number;
  tallyEntries: number;
  recordedBy: { name: string; at: string }[];
  basis: string;
};

export function loadSheet(date: string, shiftId: number, lineId: number, sqlite: Database.Database = rawDb()): SheetView | null {
  const shift = sqlite.prepare("SELECT id, code, name, startTime, endTime FROM Shift WHERE id = ?").get(shiftId) as SheetView["shift"] | undefined;
  const line = sqlite.prepare("SELECT id, code, name FROM Line WHERE id = ?").get(lineId) as SheetView["line"] | undefined;
  if (!shift || !line) return null;
  const ref = { date, shiftId, lineId };
  const entries = currentSheetEntries(ref, sqlite);
  const units = currentSheetUnits(ref, sqlite);
  const recorded = new Map<string, { total: number; n: number }>();
  const by = new Map<string, string>();
  for (const e of entries) {
    const r = recorded.get(e.category) ?? { total: 0, n: 0 };
    r.total += e.count;
    r.n += 1;
    recorded.set(e.category, r);
    if ((by.get(e.enteredByName) ?? "") < e.createdAt) by.set(e.enteredByName, e.createdAt);
  }
  for (const u of units) if ((by.get(u.enteredByName) ?? "") < u.createdAt) by.set(u.enteredByName, u.createdAt);
  const categories = (
    sqlite.prepare("SELECT code, name, family, active FROM DefectCategory ORDER BY displayOrder, code").all() as {
      code: string;
      name: string;
      family: string | null;
      active: number;
    }[]
  )
    .filter((c) => c.active || recorded.has(c.code))
    .map((c) => ({
      code: c.code,
      name: c.name,
      family: c.family,
      active: Boolean(c.active),
      recorded: recorded.get(c.code)?.total ?? 0,
      entries: recorded.get(c.code)?.n ?? 0,
    }));
  return {
    date,
    shift,
    line,
    categories,
    recordedDefects: entries.reduce((s, e) => s + e.count, 0),
    recordedUnits: units.length ? units.reduce((s, u) => s + u.units, 0) : null,
    unitsEntries: units.length,
    tallyEntries: entries.length,
    recordedBy: [...by].map(([name, at]) => ({ name, at })).sort((a, b) => b.at.localeCompare(a.at)),
    basis: sheetBasis(sqlite, ref),
  };
}
