import { z } from "zod";
import { db, writeTransaction } from "./client";
import type { Comparison } from "./generated/client";

/**
 * Saved comparisons: which groups are compared (lines, shifts, or one line against its
 * own past), over which windows, and how strictly. The JSON text columns of the model
 * (lines, shifts, categories) become arrays here, null meaning "all".
 */

export type CompareKind = "line" | "shift" | "history";
export const ADJUST_METHODS = ["bh", "bonferroni", "none"] as const;
export const SPARSE_POLICIES = ["auto", "pool", "monte-carlo", "exact", "asymptotic"] as const;

export interface ComparisonSettings {
  name: string;
  windowDays: number;
  stepDays: number;
  alpha: number;
  adjust: (typeof ADJUST_METHODS)[number];
  minEffect: number;
  sparse: (typeof SPARSE_POLICIES)[number];
  historyWeeks: number;
  /** Line codes, or null for every line. A history comparison holds exactly one. */
  lines: string[] | null;
  shifts: string[] | null;
  categories: string[] | null;
}

export interface ComparisonRecord extends ComparisonSettings {
  id: number;
  code: string;
  compare: CompareKind;
  active: boolean;
  displayOrder: number;
  updatedAt: string;
}

/** Defaults of a new comparison (also what the schema defaults say). */
export const DEFAULT_SETTINGS: Omit<ComparisonSettings, "name" | "lines" | "shifts" | "categories"> = {
  windowDays: 7,
  stepDays: 1,
  alpha: 0.05,
  adjust: "bh",
  minEffect: 0,
  sparse: "auto",
  historyWeeks: 8,
};

function parseCodes(text: string | null): string[] | null {
  if (text === null || text === "") return null;
  try {
    const value: unknown = JSON.parse(text);
    if (Array.isArray(value) && value.every((v) => typeof v === "string")) return value.length ? value : null;
  } catch {
    // A hand-edited column that is not JSON reads as "all" rather than breaking every page.
  }
  return null;
}

function asKind(value: string): CompareKind {
  return value === "shift" || value === "history" ? value : "line";
}

function oneOf<T extends readonly string[]>(values: T, value: string, fallback: T[number]): T[number] {
  return (values as readonly string[]).includes(value) ? (value as T[number]) : fallback;
}

export function toRecord(row: Comparison): ComparisonRecord {
  return {
    id: row.id,
    code: row.code,
    name: row.name,
    compare: asKind(row.compare),
    lines: parseCodes(row.lines),
    shifts: parseCodes(row.shifts),
    categories: parseCodes(row.categories),
    windowDays: row.windowDays,
    stepDays: row.stepDays,
    alpha: row.alpha,
    adjust: oneOf(ADJUST_METHODS, row.adjust, "bh"),
    minEffect: row.minEffect,
    sparse: oneOf(SPARSE_POLICIES, row.sparse, "auto"),
    historyWeeks: row.historyWeeks,
    active: row.active,
    displayOrder: row.displayOrder,
    updatedAt: row.updatedAt.toISOString(),
  };
}

/** The comparisons a plant starts with, given its active lines in display order. */
export function defaultComparisonRows(lines: { code: string; name: string }[]) {
  const rows: { code: string; name: string; compare: CompareKind; lines: string | null; displayOrder: number }[] = [
    { code: "lines", name: "All lines compared", compare: "line", lines: null, displayOrder: 0 },
    { code: "shifts", name: "All shifts compared", compare: "shift", lines: null, displayOrder: 1 },
  ];
  lines.forEach((line, i) => {
    rows.push({
      code: `shifts-${line.code}`,
      name: `${line.name}: its shifts compared`,
      compare: "shift",
      lines: JSON.stringify([line.code]),
      displayOrder: 10 + i,
    });
  });
  lines.forEach((line, i) => {
    rows.push({
      code: `history-${line.code}`,
      name: `${line.name} against its own recent past`,
      compare: "history",
      lines: JSON.stringify([line.code]),
      displayOrder: 100 + i,
    });
  });
  return rows;
}

/**
 * Creates the default comparisons when none exist: across lines, across shifts, each
 * active line across its shifts, and each active line against its own recent past.
 * Safe to call on every request (one COUNT when they exist) and from two requests at
 * once (the unique code keeps a second insert out). Each creation is audited.
 */
export async function ensureDefaultComparisons(): Promise<number> {
  if ((await db().comparison.count()) > 0) return 0;
  const lines = await db().line.findMany({
    where: { active: true },
    orderBy: [{ displayOrder: "asc" }, { code: "asc" }],
    select: { code: true, name: true },
  });
  let created = 0;
  for (const row of defaultComparisonRows(lines)) {
    try {
      await writeTransaction(async (tx) => {
        const saved = await tx.comparison.create({ data: { ...DEFAULT_SETTINGS, ...row } });
        await tx.auditEvent.create({
          data: {
            actorName: "system",
            action: "comparison.create",
            entity: "Comparison",
            entityId: saved.code,
            after: JSON.stringify(settingsOf(toRecord(saved))),
            reason: "default comparisons created on first use",
          },
        });
      });
      created++;
    } catch (error) {
      if (!isUniqueViolation(error)) throw error;
    }
  }
  return created;
}

function isUniqueViolation(error: unknown): boolean {
  return typeof error === "object" && error !== null && (error as { code?: string }).code === "P2002";
}

/** Active comparisons in display order (creating the defaults first when there are none). */
export async function listComparisons(): Promise<ComparisonRecord[]> {
  await ensureDefaultComparisons();
  const rows = await db().comparison.findMany({
    where: { active: true },
    orderBy: [{ displayOrder: "asc" }, { code: "asc" }],
  });
  return rows.map(toRecord);
}

export async function getComparison(code: string): Promise<ComparisonRecord | null> {
  await ensureDefaultComparisons();
  const row = await db().comparison.findUnique({ where: { code } });
  return row ? toRecord(row) : null;
}

export function settingsOf(c: ComparisonRecord | ComparisonSettings): ComparisonSettings {
  return {
    name: c.name,
    windowDays: c.windowDays,
    stepDays: c.stepDays,
    alpha: c.alpha,
    adjust: c.adjust,
    minEffect: c.minEffect,
    sparse: c.sparse,
    historyWeeks: c.historyWeeks,
    lines: c.lines,
    shifts: c.shifts,
    categories: c.categories,
  };
}

const codeList = z.array(z.string().min(1).max(64)).max(500).nullable();

/** What a settings form may change; the kind of comparison and its code stay fixed. */
export const settingsSchema = z
  .object({
    name: z.string().trim().min(1, "Give the comparison a name.").max(120, "At most 120 characters."),
    windowDays: z.number().int("Whole days.").min(1, "At least 1 day.").max(366, "At most 366 days."),
    stepDays: z.number().int("Whole days.").min(1, "At least 1 day.").max(366, "At most 366 days."),
    alpha: z.number().gt(0, "Above 0.").max(0.2, "At most 0.2: a looser level flags mostly noise."),
    adjust: z.enum(ADJUST_METHODS),
    minEffect: z.number().min(0, "0 or more.").max(1, "At most 1."),
    sparse: z.enum(SPARSE_POLICIES),
    historyWeeks: z.number().int("Whole weeks.").min(1, "At least 1 week.").max(104, "At most 104 weeks."),
    lines: codeList,
    shifts: codeList,
    categories: codeList,
  })
  .refine((s) => s.stepDays <= s.windowDays, { path: ["stepDays"], message: "The step cannot be longer than the window." });

export type SettingsInput = z.input<typeof settingsSchema>;

/** Rules that depend on the kind of comparison and the plant's codes. */
export function checkSettingsAgainstPlant(
  compare: CompareKind,
  s: ComparisonSettings,
  plant: { lines: string[]; shifts: string[]; categories: string[] },
): Record<string, string> {
  const errors: Record<string, string> = {};
  const unknown = (codes: string[] | null, known: string[]) => (codes ?? []).filter((c) => !known.includes(c));
  const badLines = unknown(s.lines, plant.lines);
  const badShifts = unknown(s.shifts, plant.shifts);
  const badCategories = unknown(s.categories, plant.categories);
  if (badLines.length) errors.lines = `Unknown line codes: ${badLines.join(", ")}.`;
  if (badShifts.length) errors.shifts = `Unknown shift codes: ${badShifts.join(", ")}.`;
  if (badCategories.length) errors.categories = `Unknown category codes: ${badCategories.join(", ")}.`;
  if (compare === "history" && (s.lines?.length ?? 0) !== 1) errors.lines = "A comparison against the past follows exactly one line.";
  if (compare === "line" && s.lines !== null && s.lines.length < 2) errors.lines = "Pick at least 2 lines, or all.";
  if (compare === "shift" && s.shifts !== null && s.shifts.length < 2) errors.shifts = "Pick at least 2 shifts, or all.";
  if (s.categories !== null && s.categories.length < 2) errors.categories = "Pick at least 2 categories, or all.";
  return errors;
}

/**
 * Saves new settings and writes an AuditEvent with the before and after values, in one
 * transaction. Returns null when the comparison does not exist.
 */
export async function updateComparisonSettings(
  code: string,
  settings: ComparisonSettings,
  actor: { id: number | null; name: string },
): Promise<ComparisonRecord | null> {
  return writeTransaction(async (tx) => {
    const current = await tx.comparison.findUnique({ where: { code } });
    if (!current) return null;
    const before = settingsOf(toRecord(current));
    const saved = await tx.comparison.update({
      where: { code },
      data: {
        name: settings.name,
        windowDays: settings.windowDays,
        stepDays: settings.stepDays,
        alpha: settings.alpha,
        adjust: settings.adjust,
        minEffect: settings.minEffect,
        sparse: settings.sparse,
        historyWeeks: settings.historyWeeks,
        lines: settings.lines === null ? null : JSON.stringify(settings.lines),
        shifts: settings.shifts === null ? null : JSON.stringify(settings.shifts),
        categories: settings.categories === null ? null : JSON.stringify(settings.categories),
      },
    });
    const record = toRecord(saved);
    await tx.auditEvent.create({
      data: {
        actorId: actor.id,
        actorName: actor.name,
        action: "comparison.update",
        entity: "Comparison",
        entityId: code,
        before: JSON.stringify(before),
        after: JSON.stringify(settingsOf(record)),
      },
    });
    return record;
  });
}
