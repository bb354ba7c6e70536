import type Database from "better-sqlite3";
import { rawDb } from "@/lib/db/client";
import { dayNumber, isoDate } from "./dates";
import { lowerBound } from "./plan";
import { buildLiveScan, liveOutput, patchLiveScan, type LiveScan, type ScanOutput } from "./service-build";
import { readActiveComparisons, readComparison, readMasterData, type MasterData, type SavedComparison } from "./service-settings";
import { changesSince, connectionStamp, entryCounts, maxIds, sameStamp, type ConnectionStamp, type MaxIds } from "./service-version";
import type { ScanWindow } from "./types";
import { windowDetailOf, type WindowDetail } from "./window-detail";

export type { SavedComparison } from "./service-settings";
export type { ScanOutput } from "./service-build";
export type { WindowDetail } from "./window-detail";

/** Names for the codes a comparison's results use. */
export interface ComparisonLabels {
  /** Row code → label: line or shift names, or "Current window" / "Baseline" for history. */
  rows: Record<string, string>;
  lines: Record<string, string>;
  shifts: Record<string, string>;
  categories: Record<string, { name: string; family: string | null }>;
}

/** A saved comparison's scan: mix windows and episodes, rate windows, labels, state now. */
export interface ComparisonRun extends ScanOutput {
  comparison: SavedComparison;
  labels: ComparisonLabels;
  /** First and last production date with current entries (null when none). */
  firstDate: string | null;
  lastDate: string | null;
  /** The latest window, and what it says now. */
  latest: ScanWindow | null;
  status: "flagged" | "quiet" | "not-testable" | "no-data";
  /** How this answer was produced: a full build, a patch of late data, or the kept result. */
  computed: { how: "built" | "patched" | "kept"; retestedWindows: number; at: string };
}

/** The full analysis of one window of a saved comparison, with its labels. */
export interface ComparisonWindowDetail extends WindowDetail {
  comparison: SavedComparison;
  labels: ComparisonLabels;
}

interface Kept {
  live: LiveScan;
  stamp: ConnectionStamp;
  ids: MaxIds;
  counts: MaxIds;
  settingsKey: string;
  masterKey: string;
  run: ComparisonRun;
}

interface ServiceState {
  db: Database.Database | null;
  byId: Map<number, Kept>;
  byAlias: Map<number | string, Kept>;
}

// On globalThis so Next's module reloads in development keep the results.
const holder = globalThis as unknown as { linemixMonitor?: ServiceState };

function state(db: Database.Database): ServiceState {
  let s = holder.linemixMonitor;
  if (!s || s.db !== db) s = holder.linemixMonitor = { db, byId: new Map(), byAlias: new Map() };
  return s;
}

/**
 * Forgets every kept result (tests; after a restore), so the next request rebuilds.
 *
 * @example
 * forgetKeptResults(); (await runComparison("lines"))?.computed.how; // "built"
 */
export function forgetKeptResults(): void {
  holder.linemixMonitor = undefined;
}

/**
 * Runs a saved comparison (by id or code) over the current entries and returns windows,
 * episodes, rate windows and labels; null when no such comparison exists.
 *
 * Method: the SQL aggregation of lib/monitor/service-load into a day × group × category
 * cube, then the same scan as scanWindows / scanHistory (plus scanRates) — see those for
 * the statistics. The result is kept in memory: a repeated request with no write to the
 * database in between is answered from it after two pragma reads; when entries arrived,
 * only the days they touch (and the days of entries they supersede) are reloaded and
 * only the windows covering those days retested, then the cheap across-window
 * adjustment is redone. Settings or master-data changes rebuild.
 *
 * Cost: cold ≈ 1.5–2.5 s for two million entries (aggregation dominates); kept < 1 ms;
 * a late correction ≈ the SQL for its days plus windowDays windows.
 *
 * The returned objects are shared with the kept state: read them, do not change them.
 *
 * @example
 * // test/monitor/service.test.ts data: 5 lines, 80 days, L03 makes 3× its C07 from 2026-02-20 to 03-05
 * (await runComparison("lines"))?.episodes[0];
 * // { start: "2026-02-17", end: "2026-03-08", windows: 14, peak: { start: "2026-02-27", … },
 * //   drivers: [{ row: "L03", category: "C07", windows: 14, adjustedResidual: 7.26… }, …] }
 */
export async function runComparison(idOrCode: number | string): Promise<ComparisonRun | null> {
  return runSync(rawDb(), idOrCode);
}

/**
 * {@link runComparison} for every active comparison, in display order (the overview);
 * each one served from its kept result when nothing changed.
 *
 * @example
 * (await runAllComparisons()).map((r) => [r.comparison.code, r.status]); // [["l1-shifts", "quiet"], ["l3-history", "quiet"], ["lines", "quiet"]]
 */
export async function runAllComparisons(): Promise<ComparisonRun[]> {
  const db = rawDb();
  return readActiveComparisons(db).map((c) => runSync(db, c.id)!);
}

/**
 * The full analysis of the window of a saved comparison that starts on `start`: observed
 * table, analyzeTable (expected, residuals, contributions, G², p, V, expected-count check),
 * method, pooling, drivers at the comparison's α (flagged or not) and defects per unit per
 * group. Null when the comparison or the window does not exist.
 *
 * Cost: a kept-result check, then one window's sum and one analyzeTable.
 *
 * @example
 * // service test data, the episode's peak window
 * const d = await windowDetail("lines", "2026-02-27");
 * [d?.analysis?.chiSquare, d?.analysis?.gSquare, d?.critical]; // [86.49…, 80.53…, 3.227…]
 * d?.drivers[0]; // { row: "L03", category: "C07", observed: 66, expected: 33.13…, ratio: 1.99…, adjustedResidual: 6.80…, contribution: 0.377… }
 */
export async function windowDetail(comparison: number | string, start: string): Promise<ComparisonWindowDetail | null> {
  const db = rawDb();
  const run = runSync(db, comparison);
  if (!run) return null;
  const kept = state(db).byId.get(run.comparison.id)!;
  const mix = kept.live.mix;
  if (!mix) return null;
  const day = dayNumber(start);
  const k = lowerBound(mix.starts, day);
  if (k >= mix.starts.length || mix.starts[k] !== day) return null;
  return { comparison: run.comparison, labels: run.labels, ...windowDetailOf(mix, run.windows, kept.live.rates, k) };
}

function runSync(db: Database.Database, idOrCode: number | string): ComparisonRun | null {
  const s = state(db);
  // Taken before any read: a write during this request moves it, so the next request looks again.
  const stamp = connectionStamp(db);
  const quick = s.byAlias.get(idOrCode);
  if (quick && sameStamp(quick.stamp, stamp)) return served(quick.run, "kept", 0);
  const comparison = readComparison(db, idOrCode);
  if (!comparison) return null;
  const master = readMasterData(db);
  const settingsKey = JSON.stringify(comparison);
  const masterKey = JSON.stringify(master);
  const ids = maxIds(db);
  const previous = s.byId.get(comparison.id);
  let kept: Kept;
  if (previous && previous.settingsKey === settingsKey && previous.masterKey === masterKey) {
    kept = refresh(db, previous, ids, stamp);
  } else {
    kept = build(db, comparison, master, ids, stamp, settingsKey, masterKey);
  }
  s.byId.set(comparison.id, kept);
  s.byAlias.set(comparison.id, kept);
  s.byAlias.set(comparison.code, kept);
  return kept.run;
}

function build(
  db: Database.Database,
  comparison: SavedComparison,
  master: MasterData,
  ids: MaxIds,
  stamp: ConnectionStamp,
  settingsKey: string,
  masterKey: string,
): Kept {
  const counts = entryCounts(db);
  const live = buildLiveScan(db, comparison, master);
  const run = runOf(live, "built", live.mix?.states.length ?? 0);
  return { live, stamp, ids, counts, settingsKey, masterKey, run };
}

// Entries arrived (or something else was written): patch when exactly the new ids were added.
function refresh(db: Database.Database, kept: Kept, ids: MaxIds, stamp: ConnectionStamp): Kept {
  if (ids.tally === kept.ids.tally && ids.units === kept.ids.units) {
    return { ...kept, stamp, run: served(kept.run, "kept", 0) };
  }
  const counts = entryCounts(db);
  const changes = changesSince(db, kept.ids);
  const appendOnly =
    counts.tally - kept.counts.tally === changes.added.tally && counts.units - kept.counts.units === changes.added.units;
  const outcome = appendOnly ? patchLiveScan(db, kept.live, changes.touched) : { rebuilt: true as const };
  if (outcome.rebuilt) {
    return build(db, kept.live.comparison, kept.live.master, ids, stamp, kept.settingsKey, kept.masterKey);
  }
  const run = runOf(kept.live, "patched", outcome.retested.length);
  return { ...kept, stamp, ids, counts, run };
}

function served(run: ComparisonRun, how: "kept", retestedWindows: number): ComparisonRun {
  return { ...run, computed: { how, retestedWindows, at: new Date().toISOString() } };
}

function runOf(live: LiveScan, how: "built" | "patched", retestedWindows: number): ComparisonRun {
  const output = liveOutput(live);
  const cube = live.mix?.cube;
  const latest = output.windows.length ? output.windows[output.windows.length - 1] : null;
  return {
    comparison: live.comparison,
    labels: labelsOf(live),
    firstDate: cube ? isoDate(cube.firstDay) : null,
    lastDate: cube ? isoDate(cube.firstDay + cube.days - 1) : null,
    ...output,
    latest,
    status: !latest ? "no-data" : latest.flagged ? "flagged" : latest.testable ? "quiet" : "not-testable",
    computed: { how, retestedWindows, at: new Date().toISOString() },
  };
}

function labelsOf(live: LiveScan): ComparisonLabels {
  const { master, comparison } = live;
  const lines = Object.fromEntries(master.lines.map((r) => [r.code, r.name]));
  const shifts = Object.fromEntries(master.shifts.map((r) => [r.code, r.name]));
  const categories = Object.fromEntries(master.categories.map((r) => [r.code, { name: r.name, family: r.family }]));
  const rows =
    comparison.compare === "history"
      ? { current: "Current window", baseline: `Baseline (${comparison.historyWeeks} weeks before)` }
      : comparison.compare === "shift"
        ? shifts
        : lines;
  return { rows, lines, shifts, categories };
}
