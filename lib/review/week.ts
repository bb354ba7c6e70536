import { addDays, isoWeek, isoWeekLabel, isoWeekStart } from "@/lib/dates";
import { analyzeTable } from "@/lib/stats/analyze-table";
import { criticalValue } from "./critical";
import { formatP, formatRange, formatV } from "./format";
import type { Names } from "./names";

/**
 * The weekly review: every line compared over one ISO 8601 week (Monday–Sunday) and
 * against the week before. Pure: counts in, a printable page's data out.
 */

const WEEK_LABEL = /^(\d{4})-W(\d{2})$/;

export interface IsoWeekRef {
  label: string;
  year: number;
  week: number;
  start: string;
  end: string;
}

function weeksInYear(year: number): number {
  return isoWeek(`${year}-12-28`).week;
}

function ref(year: number, week: number): IsoWeekRef {
  const start = isoWeekStart(year, week);
  return { label: `${year}-W${String(week).padStart(2, "0")}`, year, week, start, end: addDays(start, 6) };
}

/** "2026-W47" → the week's Monday and Sunday; null for anything else, including W53 of a 52-week year. */
export function parseIsoWeek(label: string): IsoWeekRef | null {
  const m = WEEK_LABEL.exec(label.trim());
  if (!m) return null;
  const year = Number(m[1]);
  const week = Number(m[2]);
  if (year < 1900 || year > 9999 || week < 1 || week > weeksInYear(year)) return null;
  return ref(year, week);
}

export function weekOf(date: string): IsoWeekRef {
  const { year, week } = isoWeek(date);
  return ref(year, week);
}

/** The last week that has fully ended before `today` (the week before today's week). */
export function lastCompleteWeek(today: string): IsoWeekRef {
  return weekOf(addDays(weekOf(today).start, -7));
}

export function shiftWeek(w: IsoWeekRef, by: number): IsoWeekRef {
  return weekOf(addDays(w.start, 7 * by));
}

export { isoWeekLabel };

/** Counts of one week: rows (lines or shifts) × categories, with units inspected per row. */
export interface WeekCounts {
  rows: string[];
  categories: string[];
  /** counts[i][j] for rows[i], categories[j]. */
  counts: number[][];
  /** Units per row, null where none were recorded. */
  units: (number | null)[];
}

export interface WeekTest {
  testable: boolean;
  reason: string | null;
  n: number;
  df: number | null;
  chiSquare: number | null;
  pValue: number | null;
  cramersV: number | null;
  /** Cochran's rule held, so the asymptotic p can be trusted. */
  cochran: boolean | null;
}

export interface WeekCell {
  row: string;
  rowName: string;
  category: string;
  categoryName: string;
  observed: number;
  expected: number;
  ratio: number;
  adjustedResidual: number;
  contribution: number;
  /** Also beyond the critical value the week before. */
  alsoLastWeek: boolean;
  /** Its adjusted residual the week before (null when not in last week's table). */
  previousResidual: number | null;
}

export interface WeekLine {
  code: string;
  name: string;
  defects: number;
  previousDefects: number;
  dpu: number | null;
  previousDpu: number | null;
  /** The line's largest categories this week, with the share they had the week before. */
  top: { category: string; name: string; count: number; share: number; previousShare: number | null; change: number | null }[];
  /** The cell of this line with the largest |adjusted residual| this week. */
  strongest: { categoryName: string; adjustedResidual: number; ratio: number } | null;
}

export interface WeekShiftRow {
  line: string;
  name: string;
  current: WeekTest;
  previous: WeekTest;
}

export interface WeekReview {
  week: IsoWeekRef;
  previousWeek: IsoWeekRef;
  range: string;
  previousRange: string;
  current: WeekTest;
  previous: WeekTest;
  /** Change in bias-corrected V from the week before (null when either is missing). */
  deltaV: number | null;
  critical: number | null;
  lines: WeekLine[];
  drivers: WeekCell[];
  shifts: WeekShiftRow[];
  summary: string[];
}

interface Tested {
  test: WeekTest;
  rows: string[];
  columns: string[];
  observed: number[][];
  expected: number[][];
  residuals: number[][];
  contributions: number[][];
}

/** The chi-square test of one week's table, dropping rows and categories with no defects. */
export function testWeek(counts: WeekCounts): Tested {
  const keepRows = counts.rows.map((_, i) => i).filter((i) => counts.counts[i].some((x) => x > 0));
  const keepCols = counts.categories.map((_, j) => j).filter((j) => keepRows.some((i) => counts.counts[i][j] > 0));
  const n = keepRows.reduce((s, i) => s + counts.counts[i].reduce((t, x) => t + x, 0), 0);
  const empty = (reason: string): Tested => ({
    test: { testable: false, reason, n, df: null, chiSquare: null, pValue: null, cramersV: null, cochran: null },
    rows: keepRows.map((i) => counts.rows[i]),
    columns: keepCols.map((j) => counts.categories[j]),
    observed: [],
    expected: [],
    residuals: [],
    contributions: [],
  });
  if (n === 0) return empty("no defects recorded");
  if (keepRows.length < 2) return empty("fewer than 2 groups with defects");
  if (keepCols.length < 2) return empty("fewer than 2 categories with defects");
  const observed = keepRows.map((i) => keepCols.map((j) => counts.counts[i][j]));
  const a = analyzeTable(observed);
  return {
    test: {
      testable: true,
      reason: null,
      n,
      df: a.df,
      chiSquare: a.chiSquare,
      pValue: a.pValue,
      cramersV: Number.isFinite(a.cramersVCorrected) ? a.cramersVCorrected : null,
      cochran: a.expectedCountCheck.cochran,
    },
    rows: keepRows.map((i) => counts.rows[i]),
    columns: keepCols.map((j) => counts.categories[j]),
    observed,
    expected: a.expected,
    residuals: a.adjustedResiduals,
    contributions: a.contributions,
  };
}

function rowTotal(c: WeekCounts, code: string): { defects: number; units: number | null; shares: Map<string, number> } {
  const i = c.rows.indexOf(code);
  if (i < 0) return { defects: 0, units: null, shares: new Map() };
  const defects = c.counts[i].reduce((s, x) => s + x, 0);
  const shares = new Map<string, number>();
  c.categories.forEach((k, j) => shares.set(k, defects > 0 ? c.counts[i][j] / defects : 0));
  return { defects, units: c.units[i], shares };
}

export const WEEK_TOP_CATEGORIES = 3;

export interface WeekInput {
  week: IsoWeekRef;
  alpha: number;
  current: WeekCounts;
  previous: WeekCounts;
  /** Per line, the week's shift × category counts (this week and the week before). */
  shifts?: { line: string; current: WeekCounts; previous: WeekCounts }[];
}

export function shapeWeek(input: WeekInput, names: Names): WeekReview {
  const previousWeek = shiftWeek(input.week, -1);
  const now = testWeek(input.current);
  const before = testWeek(input.previous);
  const critical = now.test.testable ? criticalValue(now.rows.length, now.columns.length, input.alpha) : null;
  const criticalBefore = before.test.testable ? criticalValue(before.rows.length, before.columns.length, input.alpha) : null;

  const residualBefore = (row: string, category: string): number | null => {
    const i = before.rows.indexOf(row);
    const j = before.columns.indexOf(category);
    return i < 0 || j < 0 ? null : before.residuals[i][j];
  };

  const drivers: WeekCell[] = [];
  if (critical !== null) {
    now.rows.forEach((r, i) =>
      now.columns.forEach((k, j) => {
        const res = now.residuals[i][j];
        if (!(Math.abs(res) > critical)) return;
        const prev = residualBefore(r, k);
        drivers.push({
          row: r,
          rowName: names.line(r),
          category: k,
          categoryName: names.category(k),
          observed: now.observed[i][j],
          expected: now.expected[i][j],
          ratio: now.observed[i][j] / now.expected[i][j],
          adjustedResidual: res,
          contribution: now.contributions[i][j],
          alsoLastWeek: prev !== null && criticalBefore !== null && Math.abs(prev) > criticalBefore && Math.sign(prev) === Math.sign(res),
          previousResidual: prev,
        });
      }),
    );
  }
  drivers.sort((x, y) => Math.abs(y.adjustedResidual) - Math.abs(x.adjustedResidual));

  const allLines = [...new Set([...input.current.rows, ...input.previous.rows])].sort();
  const lines: WeekLine[] = allLines.map((code) => {
    const cur = rowTotal(input.current, code);
    const prev = rowTotal(input.previous, code);
    const ranked = [...cur.shares.entries()].filter(([, s]) => s > 0).sort((a, b) => b[1] - a[1]).slice(0, WEEK_TOP_CATEGORIES);
    const i = now.rows.indexOf(code);
    let strongest: WeekLine["strongest"] = null;
    if (i >= 0 && now.test.testable) {
      let best = 0;
      now.columns.forEach((k, j) => {
        const r = now.residuals[i][j];
        if (strongest === null || Math.abs(r) > Math.abs(best)) {
          best = r;
          strongest = { categoryName: names.category(k), adjustedResidual: r, ratio: now.observed[i][j] / now.expected[i][j] };
        }
      });
    }
    return {
      code,
      name: names.line(code),
      defects: cur.defects,
      previousDefects: prev.defects,
      dpu: cur.units ? cur.defects / cur.units : null,
      previousDpu: prev.units ? prev.defects / prev.units : null,
      top: ranked.map(([k, share]) => {
        const previousShare = prev.defects > 0 ? (prev.shares.get(k) ?? 0) : null;
        return {
          category: k,
          name: names.category(k),
          count: Math.round(share * cur.defects),
          share,
          previousShare,
          change: previousShare === null ? null : share - previousShare,
        };
      }),
      strongest,
    };
  });

  const shifts: WeekShiftRow[] = (input.shifts ?? []).map((s) => ({
    line: s.line,
    name: names.line(s.line),
    current: testWeek(s.current).test,
    previous: testWeek(s.previous).test,
  }));

  const deltaV = now.test.cramersV !== null && before.test.cramersV !== null ? now.test.cramersV - before.test.cramersV : null;
  const summary = weekSummary(input.week, now.test, before.test, drivers, input.alpha);
  return {
    week: input.week,
    previousWeek,
    range: formatRange(input.week.start, input.week.end),
    previousRange: formatRange(previousWeek.start, previousWeek.end),
    current: now.test,
    previous: before.test,
    deltaV,
    critical,
    lines,
    drivers,
    shifts,
    summary,
  };
}

function weekSummary(week: IsoWeekRef, now: WeekTest, before: WeekTest, drivers: WeekCell[], alpha: number): string[] {
  if (!now.testable) return [`The lines cannot be compared in ${week.label}: ${now.reason}.`];
  const out: string[] = [];
  const differs = (now.pValue ?? 1) <= alpha;
  out.push(
    differs
      ? `In ${week.label} the lines' defect mixes differ (p = ${formatP(now.pValue)}, V = ${formatV(now.cramersV)}).`
      : `In ${week.label} no difference in the lines' defect mixes is shown (p = ${formatP(now.pValue)}, V = ${formatV(now.cramersV)}).`,
  );
  if (before.testable) {
    const wasDifferent = (before.pValue ?? 1) <= alpha;
    out.push(
      `The week before: ${wasDifferent ? "a difference" : "no difference shown"} (p = ${formatP(before.pValue)}, V = ${formatV(before.cramersV)}).`,
    );
  }
  const fresh = drivers.filter((d) => !d.alsoLastWeek);
  if (drivers.length) {
    out.push(
      `${drivers.length} ${drivers.length === 1 ? "cell lies" : "cells lie"} beyond the critical value, ${fresh.length} of them new this week; the strongest: ${drivers[0].rowName} × ${drivers[0].categoryName} (${drivers[0].ratio.toFixed(1)}× expected).`,
    );
  }
  if (now.cochran === false) out.push("Some expected counts are small: the chi-square p-value of this week is approximate.");
  out.push("One week is one test: this p-value is not adjusted across weeks. The rolling-window comparisons adjust for the many windows.");
  return out;
}
