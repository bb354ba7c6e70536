import { rawDb } from "@/lib/db/client";
import type { ComparisonRecord } from "@/lib/db/comparisons";
import { addDays } from "@/lib/dates";
import { scanHistory, scanWindows } from "@/lib/monitor";
import type { ScanResult, ScanWindow, TallyRow, UnitsRow } from "@/lib/monitor/types";
import { analyzeTable, type TableAnalysis } from "@/lib/stats/analyze-table";
import { criticalValue } from "./critical";

/**
 * Where the review screens get their numbers: the scan of a saved comparison and the
 * full table of one window. Everything statistical is lib/monitor's and lib/stats's; this
 * file only reads the current tallies, maps a saved comparison to a scan configuration
 * and caches the result until the data or the settings change.
 */

export interface DataVersion {
  tallies: string;
  units: string;
}

interface Loaded {
  version: string;
  rows: TallyRow[];
  units: UnitsRow[];
  families: Record<string, string>;
  lastDate: string | null;
}

interface ScanCacheEntry {
  key: string;
  result: ScanResult;
  rates?: RateSeries | null;
}

const cache = globalThis as unknown as { linemixReview?: { loaded?: Loaded; scans: Map<string, ScanCacheEntry> } };

function store() {
  cache.linemixReview ??= { scans: new Map() };
  return cache.linemixReview;
}

/** A cheap fingerprint of the data: changes whenever a tally or a units row is added. */
export function dataVersion(): string {
  const t = rawDb().prepare("SELECT COUNT(*) AS n, MAX(id) AS m FROM TallyEntry").get() as { n: number; m: number | null };
  const u = rawDb().prepare("SELECT COUNT(*) AS n, MAX(id) AS m FROM InspectionCount").get() as { n: number; m: number | null };
  return `${t.n}:${t.m ?? 0}|${u.n}:${u.m ?? 0}`;
}

function load(): Loaded {
  const s = store();
  const version = dataVersion();
  if (s.loaded && s.loaded.version === version) return s.loaded;
  const db = rawDb();
  const rows = db
    .prepare(
      `SELECT e.productionDate AS date, l.code AS line, s.code AS shift, c.code AS category, SUM(e.count) AS count
       FROM TallyEntry e
       JOIN Line l ON l.id = e.lineId JOIN Shift s ON s.id = e.shiftId JOIN DefectCategory c ON c.id = e.categoryId
       WHERE NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id)
       GROUP BY e.productionDate, e.lineId, e.shiftId, e.categoryId
       ORDER BY e.productionDate`,
    )
    .all() as TallyRow[];
  const units = db
    .prepare(
      `SELECT i.productionDate AS date, l.code AS line, s.code AS shift, SUM(i.units) AS units
       FROM InspectionCount i JOIN Line l ON l.id = i.lineId JOIN Shift s ON s.id = i.shiftId
       WHERE NOT EXISTS (SELECT 1 FROM InspectionCount x WHERE x.supersedesId = i.id)
       GROUP BY i.productionDate, i.lineId, i.shiftId
       ORDER BY i.productionDate`,
    )
    .all() as UnitsRow[];
  const families: Record<string, string> = {};
  for (const c of db.prepare("SELECT code, family FROM DefectCategory WHERE family IS NOT NULL").all() as { code: string; family: string }[]) {
    families[c.code] = c.family;
  }
  const lastDate = rows.length ? rows[rows.length - 1].date : null;
  s.loaded = { version, rows, units, families, lastDate };
  s.scans.clear();
  return s.loaded;
}

function scanOptions(c: ComparisonRecord, families: Record<string, string>) {
  return {
    windowDays: c.windowDays,
    stepDays: c.stepDays,
    alpha: c.alpha,
    adjust: c.adjust,
    minEffect: c.minEffect,
    sparse: c.sparse,
    shifts: c.shifts ?? undefined,
    categories: c.categories ?? undefined,
    families,
  };
}

export interface ComparisonRun {
  comparison: ComparisonRecord;
  windows: ScanWindow[];
  episodes: ScanResult["episodes"];
  /** Last production date with data, or null on an empty plant. */
  lastDate: string | null;
}

/** The scan of one saved comparison, cached until data or settings change. */
export function runComparison(c: ComparisonRecord): ComparisonRun {
  const loaded = load();
  const key = `${loaded.version}|${c.updatedAt}`;
  const s = store();
  const hit = s.scans.get(c.code);
  let result: ScanResult;
  if (hit && hit.key === key) result = hit.result;
  else {
    const options = scanOptions(c, loaded.families);
    result =
      c.compare === "history"
        ? scanHistory(loaded.rows, { ...options, line: (c.lines ?? [])[0] ?? "", historyWeeks: c.historyWeeks })
        : scanWindows(loaded.rows, { ...options, compare: c.compare, lines: c.lines ?? undefined });
    s.scans.set(c.code, { key, result });
  }
  return { comparison: c, windows: result.windows, episodes: result.episodes, lastDate: loaded.lastDate };
}

export interface WindowTable {
  comparison: ComparisonRecord;
  window: ScanWindow;
  /** Row codes of the tested table ("current"/"baseline" for history). */
  rows: string[];
  /** Column labels of the tested table (category codes, or pooled labels). */
  columns: string[];
  observed: number[][];
  analysis: TableAnalysis;
  /** Bonferroni critical |adjusted residual| for the table's cells at the comparison's α. */
  critical: number;
  /** Defects, units and defects per unit per row over the window (units null when none recorded). */
  rates: { row: string; defects: number; units: number | null }[];
  /** Dates the baseline covers (history comparisons). */
  baseline: { start: string; end: string } | null;
}


/** The full table and analysis of the window starting on `start`, or null when no such window. */
export function windowTable(c: ComparisonRecord, start: string): WindowTable | null {
  const run = runComparison(c);
  const window = run.windows.find((w) => w.start === start);
  if (!window || !window.testable) return window ? untestable(c, window) : null;
  const loaded = load();
  const { rows, observed, rates, baseline } = sumWindow(c, window, loaded);
  let columns = window.categories;
  let table = observed;
  if (window.pooled && window.pooled.merged.length > 0) {
    const pooled = applyPooling(observed, window.categories, window.pooled.columns, window.pooled.merged);
    columns = window.pooled.columns;
    table = pooled;
  }
  const analysis = analyzeTable(table);
  return {
    comparison: c,
    window,
    rows,
    columns,
    observed: table,
    analysis,
    critical: criticalValue(analysis.rows, analysis.columns, c.alpha),
    rates,
    baseline,
  };
}

function untestable(c: ComparisonRecord, window: ScanWindow): WindowTable | null {
  void c;
  void window;
  return null;
}

function sumWindow(c: ComparisonRecord, w: ScanWindow, loaded: Loaded) {
  const history = c.compare === "history";
  const line = (c.lines ?? [])[0];
  const baseline = history ? { start: addDays(w.start, -c.historyWeeks * 7), end: addDays(w.start, -1) } : null;
  const rows = history ? ["current", "baseline"] : w.groups;
  const rowIndex = new Map(rows.map((r, i) => [r, i]));
  const colIndex = new Map(w.categories.map((k, i) => [k, i]));
  const observed = rows.map(() => new Array<number>(w.categories.length).fill(0));
  const shiftOk = c.shifts ? new Set(c.shifts) : null;
  const lineOk = c.lines ? new Set(c.lines) : null;
  const rowOf = (r: { date: string; line: string; shift: string }): number | undefined => {
    if (shiftOk && !shiftOk.has(r.shift)) return undefined;
    if (history) {
      if (r.line !== line) return undefined;
      if (r.date >= w.start && r.date <= w.end) return 0;
      if (baseline && r.date >= baseline.start && r.date <= baseline.end) return 1;
      return undefined;
    }
    if (lineOk && !lineOk.has(r.line)) return undefined;
    if (r.date < w.start || r.date > w.end) return undefined;
    return rowIndex.get(c.compare === "line" ? r.line : r.shift);
  };
  const from = baseline ? baseline.start : w.start;
  for (const r of rowsBetween(loaded.rows, from, w.end)) {
    const i = rowOf(r);
    if (i === undefined) continue;
    const j = colIndex.get(r.category);
    if (j === undefined) continue;
    observed[i][j] += r.count;
  }
  const units = rows.map(() => 0);
  let anyUnits = false;
  for (const u of rowsBetween(loaded.units, from, w.end)) {
    const i = rowOf(u);
    if (i === undefined) continue;
    units[i] += u.units;
    anyUnits = true;
  }
  const rates = rows.map((row, i) => ({
    row,
    defects: observed[i].reduce((s, x) => s + x, 0),
    units: anyUnits ? units[i] : null,
  }));
  return { rows, observed, rates, baseline };
}

// Rows are sorted by date: binary-search the first date ≥ from, walk to the last ≤ to.
function* rowsBetween<T extends { date: string }>(rows: readonly T[], from: string, to: string): Generator<T> {
  let lo = 0;
  let hi = rows.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (rows[mid].date < from) lo = mid + 1;
    else hi = mid;
  }
  for (let k = lo; k < rows.length && rows[k].date <= to; k++) yield rows[k];
}

function applyPooling(observed: number[][], categories: string[], columns: string[], merged: { label: string; members: string[] }[]): number[][] {
  const target = new Map<string, number>();
  columns.forEach((label, j) => target.set(label, j));
  for (const m of merged) for (const member of m.members) target.set(member, columns.indexOf(m.label));
  return observed.map((row) => {
    const out = new Array<number>(columns.length).fill(0);
    row.forEach((x, j) => {
      const t = target.get(categories[j]);
      if (t !== undefined && t >= 0) out[t] += x;
    });
    return out;
  });
}

/** Defects per row × category over any date range, for the weekly review (lines or one line's shifts). */
export function countsBetween(
  groupBy: "line" | "shift",
  from: string,
  to: string,
  filter: { lines?: string[] | null; shifts?: string[] | null; categories?: string[] | null } = {},
): { rows: string[]; categories: string[]; counts: Map<string, Map<string, number>>; units: Map<string, number> } {
  const loaded = load();
  const lineOk = filter.lines ? new Set(filter.lines) : null;
  const shiftOk = filter.shifts ? new Set(filter.shifts) : null;
  const catOk = filter.categories ? new Set(filter.categories) : null;
  const counts = new Map<string, Map<string, number>>();
  const categories = new Set<string>();
  for (const r of rowsBetween(loaded.rows, from, to)) {
    if (lineOk && !lineOk.has(r.line)) continue;
    if (shiftOk && !shiftOk.has(r.shift)) continue;
    if (catOk && !catOk.has(r.category)) continue;
    const key = groupBy === "line" ? r.line : r.shift;
    let m = counts.get(key);
    if (!m) counts.set(key, (m = new Map()));
    m.set(r.category, (m.get(r.category) ?? 0) + r.count);
    categories.add(r.category);
  }
  const units = new Map<string, number>();
  for (const u of rowsBetween(loaded.units, from, to)) {
    if (lineOk && !lineOk.has(u.line)) continue;
    if (shiftOk && !shiftOk.has(u.shift)) continue;
    const key = groupBy === "line" ? u.line : u.shift;
    units.set(key, (units.get(key) ?? 0) + u.units);
  }
  return { rows: [...counts.keys()].sort(), categories: [...categories].sort(), counts, units };
}

/** Last production date with data. */
export function lastDataDate(): string | null {
  return load().lastDate;
}

export interface RatePoint {
  start: string;
  end: string;
  defects: number;
  units: number;
  /** Defects per unit, null without units. */
  u: number | null;
  centre: number | null;
  upper: number | null;
  lower: number | null;
  signal: "above" | "below" | null;
}

export interface RateSeries {
  groups: string[];
  /** Per group, one point per scan window (same order as the scan's windows). */
  byGroup: Record<string, RatePoint[]>;
}

/**
 * Defects per unit per group and window with u-chart limits: centre ū = the group's
 * defects / units over the whole scanned history, limits ū ± 3√(ū / n) for the window's
 * n units. Interim until lib/monitor's scanRates is available to the pages.
 */
export function rateSeries(run: ComparisonRun): RateSeries | null {
  const entry = store().scans.get(run.comparison.code);
  if (entry && entry.result.windows === run.windows && entry.rates !== undefined) return entry.rates;
  const rates = computeRates(run);
  if (entry && entry.result.windows === run.windows) entry.rates = rates;
  return rates;
}

function computeRates(run: ComparisonRun): RateSeries | null {
  const c = run.comparison;
  if (run.windows.length === 0) return null;
  const loaded = load();
  if (loaded.units.length === 0) return null;
  const history = c.compare === "history";
  const groups = history ? [(c.lines ?? [])[0]] : [...new Set(run.windows.flatMap((w) => [...w.groups, ...w.droppedGroups]))].sort();
  const groupOf = (r: { line: string; shift: string }) => (history || c.compare === "line" ? r.line : r.shift);
  const lineOk = c.lines ? new Set(c.lines) : null;
  const shiftOk = c.shifts ? new Set(c.shifts) : null;
  const catOk = c.categories ? new Set(c.categories) : null;
  const first = run.windows[0].start;
  const last = run.windows[run.windows.length - 1].end;
  const day = (d: string) => Math.round((Date.parse(d) - Date.parse(first)) / 86_400_000);
  const span = day(last) + 1;
  const gi = new Map(groups.map((g, i) => [g, i]));
  const defects = new Float64Array(span * groups.length);
  const units = new Float64Array(span * groups.length);
  for (const r of rowsBetween(loaded.rows, first, last)) {
    if (lineOk && !lineOk.has(r.line)) continue;
    if (shiftOk && !shiftOk.has(r.shift)) continue;
    if (catOk && !catOk.has(r.category)) continue;
    const g = gi.get(groupOf(r));
    if (g === undefined) continue;
    defects[day(r.date) * groups.length + g] += r.count;
  }
  for (const u of rowsBetween(loaded.units, first, last)) {
    if (lineOk && !lineOk.has(u.line)) continue;
    if (shiftOk && !shiftOk.has(u.shift)) continue;
    const g = gi.get(groupOf(u));
    if (g === undefined) continue;
    units[day(u.date) * groups.length + g] += u.units;
  }
  // Prefix sums per group, so each window is two subtractions.
  const G = groups.length;
  const pd = new Float64Array((span + 1) * G);
  const pu = new Float64Array((span + 1) * G);
  for (let d = 0; d < span; d++) {
    for (let g = 0; g < G; g++) {
      pd[(d + 1) * G + g] = pd[d * G + g] + defects[d * G + g];
      pu[(d + 1) * G + g] = pu[d * G + g] + units[d * G + g];
    }
  }
  const byGroup: Record<string, RatePoint[]> = {};
  groups.forEach((group, g) => {
    const totalD = pd[span * G + g];
    const totalU = pu[span * G + g];
    const centre = totalU > 0 ? totalD / totalU : null;
    byGroup[group] = run.windows.map((w) => {
      const a = day(w.start);
      const b = day(w.end) + 1;
      const d = pd[b * G + g] - pd[a * G + g];
      const n = pu[b * G + g] - pu[a * G + g];
      const u = n > 0 ? d / n : null;
      const sigma = centre !== null && n > 0 ? Math.sqrt(centre / n) : null;
      const upper = centre !== null && sigma !== null ? centre + 3 * sigma : null;
      const lower = centre !== null && sigma !== null ? Math.max(0, centre - 3 * sigma) : null;
      const signal = u === null || upper === null || lower === null ? null : u > upper ? "above" : u < lower ? "below" : null;
      return { start: w.start, end: w.end, defects: d, units: n, u, centre, upper, lower, signal };
    });
  });
  return { groups, byGroup };
}
