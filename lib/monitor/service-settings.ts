import type Database from "better-sqlite3";
import { z } from "zod";
import type { AdjustMethod, SparseMode } from "./types";

/** A saved comparison as the service reads it (JSON columns parsed, null = all). */
export interface SavedComparison {
  id: number;
  code: string;
  name: string;
  compare: "line" | "shift" | "history";
  lines: string[] | null;
  shifts: string[] | null;
  categories: string[] | null;
  windowDays: number;
  stepDays: number;
  alpha: number;
  adjust: AdjustMethod;
  minEffect: number;
  sparse: SparseMode;
  historyWeeks: number;
  active: boolean;
  displayOrder: number;
  updatedAt: string;
}

export interface MasterRow {
  id: number;
  code: string;
  name: string;
  displayOrder: number;
  active: boolean;
}

export interface CategoryRow extends MasterRow {
  family: string | null;
}

/** Lines, shifts and categories, each in display order (then code). */
export interface MasterData {
  lines: MasterRow[];
  shifts: MasterRow[];
  categories: CategoryRow[];
}

const codeList = z
  .string()
  .nullable()
  .transform((text, ctx) => {
    if (text === null) return null;
    const parsed = z.array(z.string()).safeParse(safeJson(text));
    if (!parsed.success) {
      ctx.addIssue({ code: "custom", message: `is not a JSON array of codes: ${text}` });
      return z.NEVER;
    }
    return parsed.data.length === 0 ? null : parsed.data;
  });

function safeJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return undefined;
  }
}

const comparisonRow = z.object({
  id: z.number().int(),
  code: z.string(),
  name: z.string(),
  compare: z.enum(["line", "shift", "history"]),
  lines: codeList,
  shifts: codeList,
  categories: codeList,
  windowDays: z.number().int(),
  stepDays: z.number().int(),
  alpha: z.number(),
  adjust: z.enum(["bh", "bonferroni", "none"]),
  minEffect: z.number(),
  sparse: z.enum(["auto", "pool", "monte-carlo", "exact", "asymptotic"]),
  historyWeeks: z.number().int(),
  active: z.union([z.number(), z.boolean()]).transform(Boolean),
  displayOrder: z.number().int(),
  updatedAt: z.union([z.string(), z.number()]).transform(String),
});

const COLUMNS =
  "id, code, name, compare, lines, shifts, categories, windowDays, stepDays, alpha, adjust, minEffect, sparse, historyWeeks, active, displayOrder, updatedAt";

function parseComparison(row: unknown): SavedComparison {
  const result = comparisonRow.safeParse(row);
  if (!result.success) {
    const issue = result.error.issues[0];
    throw new RangeError(`saved comparison is invalid: ${issue.path.join(".")} ${issue.message}`);
  }
  const c = result.data;
  if (c.compare === "history" && c.lines?.length !== 1) {
    throw new RangeError(`comparison ${c.code}: a history comparison needs exactly one line`);
  }
  return c;
}

/**
 * The saved comparison with this id or code, or null; the JSON code lists parsed (an
 * empty list means all) and checked with zod, a bad row throwing a RangeError.
 *
 * @example
 * readComparison(rawDb(), "lines")?.compare; // "line"
 */
export function readComparison(db: Database.Database, idOrCode: number | string): SavedComparison | null {
  const row =
    typeof idOrCode === "number"
      ? db.prepare(`SELECT ${COLUMNS} FROM Comparison WHERE id = ?`).get(idOrCode)
      : db.prepare(`SELECT ${COLUMNS} FROM Comparison WHERE code = ?`).get(idOrCode);
  return row === undefined ? null : parseComparison(row);
}

/**
 * Active saved comparisons in display order (then code).
 *
 * @example
 * readActiveComparisons(rawDb()).map((c) => c.code); // ["l1-shifts", "l3-history", "lines"]
 */
export function readActiveComparisons(db: Database.Database): SavedComparison[] {
  return db
    .prepare(`SELECT ${COLUMNS} FROM Comparison WHERE active = 1 ORDER BY displayOrder, code`)
    .all()
    .map(parseComparison);
}

/**
 * Lines, shifts and categories (all of them: inactive ones may still have history), in
 * display order.
 *
 * @example
 * readMasterData(rawDb()).categories[0]; // { id: 1, code: "C01", name: "Category C01", family: "surface", displayOrder: 0, active: true }
 */
export function readMasterData(db: Database.Database): MasterData {
  const order = "ORDER BY displayOrder, code";
  const bool = <T extends { active: unknown }>(r: T) => ({ ...r, active: Boolean(r.active) });
  return {
    lines: (db.prepare(`SELECT id, code, name, displayOrder, active FROM Line ${order}`).all() as MasterRow[]).map(bool),
    shifts: (db.prepare(`SELECT id, code, name, displayOrder, active FROM Shift ${order}`).all() as MasterRow[]).map(bool),
    categories: (
      db.prepare(`SELECT id, code, name, family, displayOrder, active FROM DefectCategory ${order}`).all() as CategoryRow[]
    ).map(bool),
  };
}
