import { rawDb } from "@/lib/db/client";
import type { ComparisonRecord } from "@/lib/db/comparisons";
import { addDays } from "@/lib/dates";
import { scanHistory, scanWindows } from "@/lib/monitor";
import { scanRates } from "@/lib/monitor/rates";
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
  /** The window's pooled rate over the compared groups (the u-chart centre line). */
  centre: number | null;
  upper: number | null;
  lower: number | null;
  /** Outside its u-chart limits. */
  outside: "above" | "below" | null;
  /** The window's rate test flagged (adjusted across the rate windows only). */
  windowFlagged: boolean;
}

export interface RateSeries {
  groups: string[];
  /** Per group, one point per mix window (same order as the scan's windows; null where the rate scan has none). */
  byGroup: Record<string, (RatePoint | null)[]>;
}

/**
 * Defects per unit per group and window, with u-chart limits and the rate test, from
 * lib/monitor's scanRates over the same window plan as the mix scan. Cached with the scan.
 * History comparisons have no rate panel until the service offers their rate scan.
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
  if (run.windows.length === 0 || c.compare === "history") return null;
  const loaded = load();
  if (loaded.units.length === 0) return null;
  const result = scanRates(loaded.rows, loaded.units, { ...scanOptions(c, loaded.families), compare: c.compare, lines: c.lines ?? undefined });
  const byStart = new Map(result.windows.map((w) => [w.start, w]));
  const groups = [...new Set(result.windows.flatMap((w) => w.groups.map((g) => g.group)))].sort();
  const byGroup: Record<string, (RatePoint | null)[]> = {};
  for (const g of groups) {
    byGroup[g] = run.windows.map((mix) => {
      const w = byStart.get(mix.start);
      const r = w?.groups.find((x) => x.group === g);
      if (!w || !r) return null;
      return {
        start: w.start,
        end: w.end,
        defects: r.defects,
        units: r.units,
        u: r.defectsPerUnit,
        centre: w.pooledRate,
        upper: r.upper,
        lower: r.lower,
        outside: r.outside,
        windowFlagged: w.rateFlagged,
      };
    });
  }
  return { groups, byGroup };
}
