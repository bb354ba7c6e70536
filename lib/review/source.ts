import { rawDb } from "@/lib/db/client";
import type { ComparisonRecord } from "@/lib/db/comparisons";
import { addDays } from "@/lib/dates";
import { PAGE_MAX_LAG_MS, runComparison as serviceRun, runComparisonIfReady as serviceRunIfReady, windowDetail as serviceWindow, type Computed, type ComparisonRun as ServiceRun } from "@/lib/monitor/service";
import type { Episode, RateWindow, ScanWindow } from "@/lib/monitor/types";
import type { TableAnalysis } from "@/lib/stats/analyze-table";
import { criticalValue } from "./critical";

/**
 * Where the review screens get their numbers: lib/monitor's scan service (which keeps
 * each comparison's scan until the data or the settings change) for windows, episodes,
 * rates and one window's full table; and a small SQL aggregate for the weekly review's
 * calendar weeks. Nothing statistical is computed here.
 *
 * The screens read with the service's page staleness bound (PAGE_MAX_LAG_MS): while floor
 * sheets arrive, a page shows the kept scan as it stood (at most 15 s behind, brought up
 * to date in the background) instead of each page paying for the patch; `computed` says
 * how current it is, for the page to show ("results as of 10:42:05, 12 entries since").
 */

export interface ComparisonRun {
  comparison: ComparisonRecord;
  windows: ScanWindow[];
  episodes: Episode[];
  /** Rate windows of the same plan (same order as windows; null where none). */
  rateWindows: (RateWindow | null)[];
  lastDate: string | null;
  /** Why the comparison cannot be scanned (it names a line, shift or category that no longer exists), else null. */
  problem: string | null;
  /** How current the scan is: asOf (ISO) and pendingEntries (entries committed since, not yet in it). Null without a scan. */
  computed: Computed | null;
}

const EMPTY: Omit<ComparisonRun, "comparison"> = { windows: [], episodes: [], rateWindows: [], lastDate: null, problem: null, computed: null };

/**
 * The scan of one saved comparison (the service keeps it until data or settings change;
 * after a start, a comparison not yet built is built first — the page waits for it alone).
 */
export async function runComparison(c: ComparisonRecord): Promise<ComparisonRun> {
  return runOf(c, await serviceRun(c.code, { maxLagMs: PAGE_MAX_LAG_MS }));
}

/**
 * The scan of one saved comparison if it is built already, else null (its build is
 * queued): for the overview during the warm-up after a start, which shows what is ready.
 */
export function runComparisonIfReady(c: ComparisonRecord): ComparisonRun | null {
  const run = serviceRunIfReady(c.code, { maxLagMs: PAGE_MAX_LAG_MS });
  return run === null ? null : runOf(c, run ?? null);
}

// The rate windows lined up with the mix windows, once per kept scan result: the same
// array while the service hands out the same result, so pages can tell nothing changed.
const lined = new WeakMap<ServiceRun["windows"], { rates: ServiceRun["rates"]; rateWindows: (RateWindow | null)[] }>();

function rateWindowsOf(run: ServiceRun): (RateWindow | null)[] {
  const hit = lined.get(run.windows);
  if (hit && hit.rates === run.rates) return hit.rateWindows;
  const byStart = new Map(run.rates.windows.map((w) => [w.start, w]));
  const rateWindows = run.windows.map((w) => byStart.get(w.start) ?? null);
  lined.set(run.windows, { rates: run.rates, rateWindows });
  return rateWindows;
}

function runOf(c: ComparisonRecord, run: ServiceRun | null): ComparisonRun {
  if (!run) return { comparison: c, ...EMPTY };
  return {
    comparison: c,
    windows: run.windows,
    episodes: run.episodes,
    rateWindows: rateWindowsOf(run),
    lastDate: run.lastDate,
    problem: run.problem,
    computed: run.computed,
  };
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
  /** Defects and units per row over the window (units null when none recorded). */
  rates: { row: string; defects: number; units: number | null }[];
  /** Dates the baseline covers (history comparisons). */
  baseline: { start: string; end: string } | null;
}

/** The full table and analysis of the window starting on `start`; null when not testable or no such window. */
export async function windowTable(c: ComparisonRecord, start: string): Promise<{ table: WindowTable | null; rateWindow: RateWindow | null } | null> {
  const detail = await serviceWindow(c.code, start, { maxLagMs: PAGE_MAX_LAG_MS });
  if (!detail) return null;
  const rateWindow = detail.rates;
  if (!detail.analysis) return { table: null, rateWindow };
  const a = detail.analysis;
  const history = c.compare === "history";
  const units = new Map((rateWindow?.groups ?? []).map((g) => [g.group, g.units]));
  return {
    rateWindow,
    table: {
      comparison: c,
      window: detail.window,
      rows: detail.rows,
      columns: detail.columns,
      observed: detail.observed,
      analysis: a,
      critical: criticalValue(a.rows, a.columns, c.alpha),
      rates: detail.rows.map((row, i) => ({ row, defects: a.rowTotals[i], units: units.get(row) ?? null })),
      baseline: history ? { start: addDays(detail.window.start, -c.historyWeeks * 7), end: addDays(detail.window.start, -1) } : null,
    },
  };
}

/**
 * Defects per row × category over a date range (current entries: every entry that no
 * correction supersedes), grouped by line or by shift, and units inspected per row.
 */
export function countsBetween(
  groupBy: "line" | "shift",
  from: string,
  to: string,
  filter: { lines?: string[] | null } = {},
): { rows: string[]; categories: string[]; counts: Map<string, Map<string, number>>; units: Map<string, number> } {
  const db = rawDb();
  const key = groupBy === "line" ? "l.code" : "s.code";
  const lineFilter = filter.lines && filter.lines.length ? `AND l.code IN (${filter.lines.map(() => "?").join(",")})` : "";
  const lineArgs = filter.lines && filter.lines.length ? filter.lines : [];
  const tallies = db
    .prepare(
      `SELECT ${key} AS row, c.code AS category, SUM(e.count) AS n
       FROM TallyEntry e
       JOIN Line l ON l.id = e.lineId JOIN Shift s ON s.id = e.shiftId JOIN DefectCategory c ON c.id = e.categoryId
       WHERE e.productionDate BETWEEN ? AND ? ${lineFilter}
         AND NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id)
       GROUP BY 1, 2`,
    )
    .all(from, to, ...lineArgs) as { row: string; category: string; n: number }[];
  const unitRows = db
    .prepare(
      `SELECT ${key} AS row, SUM(i.units) AS n
       FROM InspectionCount i JOIN Line l ON l.id = i.lineId JOIN Shift s ON s.id = i.shiftId
       WHERE i.productionDate BETWEEN ? AND ? ${lineFilter}
         AND NOT EXISTS (SELECT 1 FROM InspectionCount x WHERE x.supersedesId = i.id)
       GROUP BY 1`,
    )
    .all(from, to, ...lineArgs) as { row: string; n: number }[];
  const counts = new Map<string, Map<string, number>>();
  const categories = new Set<string>();
  for (const t of tallies) {
    let m = counts.get(t.row);
    if (!m) counts.set(t.row, (m = new Map()));
    m.set(t.category, t.n);
    categories.add(t.category);
  }
  const units = new Map(unitRows.map((u) => [u.row, u.n]));
  return { rows: [...counts.keys()].sort(), categories: [...categories].sort(), counts, units };
}

/** Last production date with a current tally. */
export function lastDataDate(): string | null {
  const row = rawDb().prepare("SELECT MAX(productionDate) AS d FROM TallyEntry").get() as { d: string | null };
  return row.d;
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

/** Defects per unit per group and window, with u-chart limits and the rate test, from the service's rate scan. */
export function rateSeries(run: ComparisonRun): RateSeries | null {
  if (run.windows.length === 0 || run.rateWindows.every((w) => w === null || w.groups.every((g) => g.units === 0))) return null;
  const groups = [...new Set(run.rateWindows.flatMap((w) => (w ? w.groups.map((g) => g.group) : [])))];
  const byGroup: Record<string, (RatePoint | null)[]> = {};
  for (const g of groups) {
    byGroup[g] = run.rateWindows.map((w) => {
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
