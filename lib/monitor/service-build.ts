import type Database from "better-sqlite3";
import { createCube, type Cube } from "./cube";
import { dayNumber } from "./dates";
import { finishScan, retestWindows, type PreparedScan } from "./engine";
import { lowerBound, windowStarts } from "./plan";
import { finishRates, retestRates, type PreparedRates } from "./rates";
import { addCurrentTallies, addCurrentUnits, addEntryDeltas, checkPackable, currentDateRange, type LoadSpec } from "./service-load";
import type { MasterData, MasterRow, SavedComparison } from "./service-settings";
import type { TouchedEntry } from "./service-version";
import type { RateResult, ScanResult } from "./types";
import type { WindowTestOptions } from "./window-test";

/** A saved comparison's scan, kept alive so late data can be patched in. */
export interface LiveScan {
  comparison: SavedComparison;
  master: MasterData;
  spec: LoadSpec;
  /** Null when the comparison has no current entries at all. */
  mix: PreparedScan | null;
  rates: PreparedRates | null;
}

export interface ScanOutput {
  windows: ScanResult["windows"];
  episodes: ScanResult["episodes"];
  rates: RateResult;
}

/**
 * A saved comparison names a line, shift or category code the master data no longer
 * hold (renamed or removed in setup): the comparison cannot be scanned until its settings
 * are changed. A RangeError, so callers that only know RangeErrors still see the message.
 *
 * @example
 * new UnknownCodeError("history-L13", "line", "L13").message; // 'Comparison history-L13 names a line "L13" that does not exist (any more) …'
 */
export class UnknownCodeError extends RangeError {
  constructor(
    readonly comparison: string,
    readonly what: "line" | "shift" | "category",
    readonly code: string,
  ) {
    super(`Comparison ${comparison} names a ${what} "${code}" that does not exist (any more); change its settings to scan it.`);
    this.name = "UnknownCodeError";
  }
}

function select(rows: MasterRow[], codes: string[] | null, what: "line" | "shift" | "category", comparison: string): MasterRow[] {
  if (codes === null) return rows;
  const byCode = new Map(rows.map((r) => [r.code, r]));
  return codes.map((code) => {
    const row = byCode.get(code);
    if (!row) throw new UnknownCodeError(comparison, what, code);
    return row;
  });
}

/**
 * The entries a comparison reads: its filters as ids, its groups and categories in
 * display order; a code the master data does not know throws an {@link UnknownCodeError}.
 *
 * @example
 * loadSpecOf({ ...comparison, compare: "shift", lines: ["L01"] }, master).groupBy; // "shift"
 */
export function loadSpecOf(c: SavedComparison, master: MasterData): LoadSpec {
  const lines = select(master.lines, c.lines, "line", c.code);
  const shifts = select(master.shifts, c.shifts, "shift", c.code);
  const categories = select(master.categories, c.categories, "category", c.code);
  return {
    groupBy: c.compare === "shift" ? "shift" : "line",
    groupIds: (c.compare === "shift" ? shifts : lines).map((r) => r.id),
    categoryIds: categories.map((r) => r.id),
    categoryFilter: c.categories === null ? null : categories.map((r) => r.id),
    lineIds: c.lines === null ? null : lines.map((r) => r.id),
    shiftIds: c.shifts === null ? null : shifts.map((r) => r.id),
  };
}

function testOptions(c: SavedComparison, master: MasterData): WindowTestOptions {
  const families: Record<string, string> = {};
  for (const cat of master.categories) if (cat.family) families[cat.code] = cat.family;
  return {
    sparse: c.sparse,
    alpha: c.alpha,
    families,
    seedKey: c.compare === "history" ? `history:${c.lines![0]}` : c.compare,
    rowNoun: c.compare === "history" ? "periods" : `${c.compare}s`,
  };
}

function codesOf(ids: number[], rows: MasterRow[]): string[] {
  const byId = new Map(rows.map((r) => [r.id, r.code]));
  return ids.map((id) => byId.get(id)!);
}

/** Where a build is: which pass, and how far through it (days read, windows tested). */
export interface BuildStep {
  phase: "entries" | "units" | "windows" | "rates";
  done: number;
  total: number;
}

/**
 * Reads a comparison's current entries into cubes and tests every window. Groups and
 * categories without a single current entry in the whole history are left out (unless
 * the comparison names them), so a retired line does not show as "dropped" in every window.
 * All at once; {@link liveScanSteps} is the same build in slices.
 *
 * Cost: the SQL aggregation (≈ 1 s for two million entries) plus the scan.
 *
 * @example
 * buildLiveScan(rawDb(), readComparison(rawDb(), "lines")!, readMasterData(rawDb())).mix?.starts.length; // 74 for 80 days, 7-day windows
 */
export function buildLiveScan(db: Database.Database, comparison: SavedComparison, master: MasterData): LiveScan {
  const steps = liveScanSteps(db, comparison, master, Infinity);
  for (;;) {
    const next = steps.next();
    if (next.done) return next.value;
  }
}

/**
 * {@link buildLiveScan} as a generator that stops after every slice of about `sliceMs`
 * of work (a block of days read, a run of windows tested), so a caller can hand the
 * JavaScript thread back to waiting requests between slices. Slice sizes adapt to the
 * measured cost of the previous slice (at most 4× larger each time). The result equals
 * buildLiveScan's exactly: each window's test depends only on its own table and seed.
 * The reads must all see one snapshot (the caller holds a read transaction across the
 * slices), or entries arriving in between would be counted in some days and not others.
 *
 * Cost: buildLiveScan's, plus one SQL statement per block of days.
 *
 * @example
 * const steps = liveScanSteps(db, comparison, master, 20);
 * steps.next().value; // { phase: "entries", done: 7, total: 80 }
 */
export function* liveScanSteps(
  db: Database.Database,
  comparison: SavedComparison,
  master: MasterData,
  sliceMs: number,
): Generator<BuildStep, LiveScan, void> {
  checkPackable(db);
  const full = loadSpecOf(comparison, master);
  const range = currentDateRange(db, full);
  if (!range) return { comparison, master, spec: full, mix: null, rates: null };
  const first = dayNumber(range.first);
  const last = dayNumber(range.last);
  const groupRows = full.groupBy === "shift" ? master.shifts : master.lines;
  const wide = createCube(first, last - first + 1, codesOf(full.groupIds, groupRows), codesOf(full.categoryIds, master.categories));
  yield* inSlices("entries", wide.days, 7, sliceMs, (d0, n) => addCurrentTallies(db, full, dayView(wide, d0, n)));
  const { cube, spec } = compact(wide, full, comparison);
  const units = createCube(first, cube.days, cube.groups, ["units"]);
  yield* inSlices("units", units.days, 28, sliceMs, (d0, n) => addCurrentUnits(db, spec, dayView(units, d0, n)));
  const { mix, rates } = plansOf(comparison, master, cube, units);
  // Windows one at a time with the clock read after each: a sparse window's exact or Monte
  // Carlo test can cost a hundred times its neighbours', so a size learnt from them overshoots.
  yield* oneAtATime("windows", mix.starts.length, sliceMs, (k) => retestWindows(mix, k, k + 1));
  yield* inSlices("rates", rates.starts.length, 16, sliceMs, (lo, n) => retestRates(rates, lo, lo + n));
  return { comparison, master, spec, mix, rates };
}

// Days d0 … d0 + n − 1 of a cube as a cube of their own over the same memory.
function dayView(cube: Cube, d0: number, n: number): Cube {
  return { ...cube, firstDay: cube.firstDay + d0, days: n, data: cube.data.subarray(d0 * cube.width, (d0 + n) * cube.width) };
}

function* inSlices(
  phase: BuildStep["phase"],
  total: number,
  initial: number,
  sliceMs: number,
  run: (from: number, count: number) => void,
): Generator<BuildStep, void, void> {
  let size = Number.isFinite(sliceMs) ? initial : total;
  let done = 0;
  while (done < total) {
    const count = Math.min(size, total - done);
    const t = performance.now();
    run(done, count);
    const ms = performance.now() - t;
    done += count;
    if (Number.isFinite(sliceMs)) size = Math.max(1, Math.min(4 * count, Math.floor((count * sliceMs) / Math.max(ms, 0.01))));
    yield { phase, done, total };
  }
}

function* oneAtATime(phase: BuildStep["phase"], total: number, sliceMs: number, run: (k: number) => void): Generator<BuildStep, void, void> {
  let done = 0;
  while (done < total) {
    const t = performance.now();
    do run(done++);
    while (done < total && performance.now() - t < sliceMs);
    yield { phase, done, total };
  }
}

// The window plans of both scans with no window tested yet (states filled by the caller).
function plansOf(c: SavedComparison, master: MasterData, cube: Cube, units: Cube): { mix: PreparedScan; rates: PreparedRates } {
  const history = c.compare === "history";
  const baselineDays = history ? c.historyWeeks * 7 : 0;
  const last = cube.firstDay + cube.days - 1;
  const starts = windowStarts(cube.firstDay, last, c.windowDays, c.stepDays, baselineDays);
  const kind = history ? "history" : "groups";
  const mix: PreparedScan = {
    kind,
    cube,
    starts,
    windowDays: c.windowDays,
    baselineDays,
    test: testOptions(c, master),
    finalize: { alpha: c.alpha, adjust: c.adjust, minEffect: c.minEffect },
    states: [],
  };
  const rates: PreparedRates = { kind, tallies: cube, units, starts, windowDays: c.windowDays, baselineDays, alpha: c.alpha, adjust: c.adjust, states: [] };
  return { mix, rates };
}

// Drops groups and categories with no current entry over the whole range, unless named.
function compact(cube: Cube, spec: LoadSpec, c: SavedComparison): { cube: Cube; spec: LoadSpec } {
  const G = cube.groups.length;
  const C = cube.categories.length;
  const groupTotals = new Float64Array(G);
  const categoryTotals = new Float64Array(C);
  for (let d = 0; d < cube.days; d++) {
    for (let g = 0; g < G; g++) {
      const base = d * cube.width + g * C;
      for (let j = 0; j < C; j++) {
        const v = cube.data[base + j];
        groupTotals[g] += v;
        categoryTotals[j] += v;
      }
    }
  }
  const namedGroups = c.compare === "shift" ? c.shifts !== null : c.lines !== null;
  const keepG = [...groupTotals.keys()].filter((g) => namedGroups || groupTotals[g] > 0);
  const keepC = [...categoryTotals.keys()].filter((j) => c.categories !== null || categoryTotals[j] > 0);
  if (keepG.length === G && keepC.length === C) return { cube, spec };
  const out = createCube(cube.firstDay, cube.days, keepG.map((g) => cube.groups[g]), keepC.map((j) => cube.categories[j]));
  const C2 = keepC.length;
  for (let d = 0; d < cube.days; d++) {
    keepG.forEach((g, g2) => {
      keepC.forEach((j, j2) => {
        out.data[d * out.width + g2 * C2 + j2] = cube.data[d * cube.width + g * C + j];
      });
    });
  }
  return {
    cube: out,
    spec: { ...spec, groupIds: keepG.map((g) => spec.groupIds[g]), categoryIds: keepC.map((j) => spec.categoryIds[j]) },
  };
}

/** Whether an entry falls inside the comparison's filters. */
function inScope(e: TouchedEntry, spec: LoadSpec, allCategoryIds: Set<number>): boolean {
  if (spec.lineIds && !spec.lineIds.includes(e.lineId)) return false;
  if (spec.shiftIds && !spec.shiftIds.includes(e.shiftId)) return false;
  return e.categoryId === null || allCategoryIds.has(e.categoryId);
}

/** What a patch did: which windows it retested (indices), or that a rebuild is needed. */
export type PatchOutcome = { rebuilt: false; retested: number[] } | { rebuilt: true };

/**
 * Applies entries that arrived after the live scan was built: adds their count changes
 * (new entries, minus the entries they supersede) to the kept sums, retests only the
 * windows covering the days they touch (for a history scan also the windows whose
 * baseline covers them), extending the plan when data arrive past the last day. Returns rebuilt: true (without patching) when the change cannot be patched: a new
 * first day, a shorter range, or a group or category the scan has not seen.
 * Cost: O(changes) plus the retested windows and two date-range probes — no re-read of
 * the touched days (a bench day posted to by 20 clients grew to 100,000 entries).
 *
 * @example
 * patchLiveScan(rawDb(), live, changesSince(rawDb(), ids).touched); // { rebuilt: false, retested: [8, 9, 10, 11, 12, 13, 14] }
 */
export function patchLiveScan(db: Database.Database, live: LiveScan, touched: TouchedEntry[]): PatchOutcome {
  if (!live.mix || !live.rates) return { rebuilt: true };
  const full = loadSpecOf(live.comparison, live.master);
  const scope = new Set(full.categoryIds);
  const relevant = touched.filter((e) => inScope(e, full, scope));
  if (relevant.length === 0) return { rebuilt: false, retested: [] };
  const knownGroups = new Set(live.spec.groupIds);
  const knownCategories = new Set(live.spec.categoryIds);
  const groupOf = (e: TouchedEntry) => (live.spec.groupBy === "shift" ? e.shiftId : e.lineId);
  const unseen = relevant.some((e) => !knownGroups.has(groupOf(e)) || (e.categoryId !== null && !knownCategories.has(e.categoryId)));
  if (unseen) return { rebuilt: true };
  const range = currentDateRange(db, live.spec);
  const cube = live.mix.cube;
  if (!range || dayNumber(range.first) !== cube.firstDay || dayNumber(range.last) < cube.firstDay + cube.days - 1) {
    return { rebuilt: true };
  }
  extendTo(live, dayNumber(range.last));
  const tallies = relevant.filter((e) => e.table === "tally");
  const units = relevant.filter((e) => e.table === "units");
  addEntryDeltas(live.mix.cube, live.spec, tallies);
  addEntryDeltas(live.rates.units, live.spec, units, true);
  const tallyDays = new Set(tallies.map((e) => e.day));
  const unitDays = new Set(units.map((e) => e.day));
  const mixWindows = covering(live.mix, tallyDays);
  const rateWindows = covering(live.mix, new Set([...tallyDays, ...unitDays]));
  for (const [lo, hi] of ranges(mixWindows)) retestWindows(live.mix, lo, hi);
  for (const [lo, hi] of ranges(rateWindows)) retestRates(live.rates, lo, hi);
  return { rebuilt: false, retested: [...rateWindows].sort((a, b) => a - b) };
}

// Grows both cubes to a new last day and appends the new windows (tested with the rest).
function extendTo(live: LiveScan, last: number): void {
  const mix = live.mix!;
  const rates = live.rates!;
  const days = last - mix.cube.firstDay + 1;
  if (days <= mix.cube.days) return;
  const grow = (cube: Cube): Cube => {
    const out = createCube(cube.firstDay, days, cube.groups, cube.categories);
    out.data.set(cube.data);
    return out;
  };
  const cube = grow(mix.cube);
  const units = grow(rates.units);
  const c = live.comparison;
  const starts = windowStarts(cube.firstDay, last, c.windowDays, c.stepDays, mix.baselineDays);
  const before = mix.states.length;
  Object.assign(mix, { cube, starts });
  Object.assign(rates, { tallies: cube, units, starts });
  if (starts.length > before) {
    mix.states.length = starts.length;
    rates.states.length = starts.length;
    retestWindows(mix, before, starts.length);
    retestRates(rates, before, starts.length);
  }
}

// Window indices whose current window (or baseline, for history) covers one of the days.
function covering(scan: PreparedScan, days: Set<number>): Set<number> {
  const out = new Set<number>();
  const { starts, windowDays, baselineDays } = scan;
  for (const d of days) {
    // current covers d: s ∈ [d − w + 1, d]; baseline covers d: s ∈ [d + 1, d + baselineDays].
    const lo = d - windowDays + 1;
    const hi = d + baselineDays;
    for (let k = lowerBound(starts, lo); k < starts.length && starts[k] <= hi; k++) out.add(k);
  }
  return out;
}

// Sorted indices → half-open runs [lo, hi), so each run is retested with one sliding sum.
function ranges(indices: Set<number>): [number, number][] {
  const sorted = [...indices].sort((a, b) => a - b);
  const out: [number, number][] = [];
  for (const k of sorted) {
    const lastRun = out[out.length - 1];
    if (lastRun && lastRun[1] === k) lastRun[1] = k + 1;
    else out.push([k, k + 1]);
  }
  return out;
}

/**
 * The finished result (across-window pass of both scans) of a live scan.
 *
 * @example
 * liveOutput(live).episodes[0].drivers[0]; // { row: "L03", category: "C07", windows: 14, adjustedResidual: 7.26… } (service test data)
 */
export function liveOutput(live: LiveScan): ScanOutput {
  if (!live.mix || !live.rates) return { windows: [], episodes: [], rates: { windows: [], episodes: [] } };
  const { windows, episodes } = finishScan(live.mix);
  return { windows, episodes, rates: finishRates(live.rates) };
}
