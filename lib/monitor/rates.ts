import { resolveScanConfig } from "./config";
import { bucketTallies, createCube, type Cube } from "./cube";
import { dayNumber, isoDate } from "./dates";
import { HISTORY_ROWS } from "./engine";
import { windowStarts } from "./plan";
import { flaggedRuns, peakOf, runEnd } from "./runs";
import { SlidingSum } from "./sliding-sum";
import { adjust, rateTest } from "./stats";
import type { AdjustMethod, RateGroup, RateResult, RateWindow, ScanConfig, TallyRow, UnitsRow } from "./types";

/**
 * Rate windows kept in a re-testable form, beside a mix scan over the same plan: the
 * defects cube (day × group × category, the mix scan's own) and a units cube
 * (day × group × 1).
 */
export interface PreparedRates {
  kind: "groups" | "history";
  tallies: Cube;
  units: Cube;
  starts: Int32Array;
  windowDays: number;
  baselineDays: number;
  alpha: number;
  adjust: AdjustMethod;
  states: RateWindow[];
}

/**
 * Tests every window's rates (see {@link rateWindow}); O(windows · groups · categories).
 *
 * @example
 * prepareRates({ kind: "groups", tallies, units, starts, windowDays: 7, baselineDays: 0, alpha: 0.05, adjust: "bh" }).states.length; // starts.length
 */
export function prepareRates(rates: Omit<PreparedRates, "states">): PreparedRates {
  const prepared: PreparedRates = { ...rates, states: [] };
  prepared.states = testRates(prepared, 0, rates.starts.length);
  return prepared;
}

/**
 * Retests rate windows lo … hi − 1 in place (after the cubes changed under them), one
 * pair of sliding sums moved along; O((hi − lo) · groups · categories).
 *
 * @example
 * retestRates(rates, 40, 47); // the 7 windows covering one corrected day
 */
export function retestRates(rates: PreparedRates, lo: number, hi: number): void {
  const fresh = testRates(rates, lo, hi);
  for (let k = lo; k < hi; k++) rates.states[k] = fresh[k - lo];
}

/**
 * The across-window pass of the rate scan: adjusts the rate p-values across the rate
 * windows (BH by default, for the same reason as the mix scan: many overlapping windows,
 * positively dependent — Benjamini & Yekutieli 2001), flags rate signals and merges
 * them into rate episodes. Returns new window objects; the states are not changed.
 * Cost: O(m log m) for m testable windows.
 *
 * @example
 * finishRates(prepared).episodes.length; // 1 for one planted rate change
 */
export function finishRates(rates: PreparedRates): RateResult {
  const testable = rates.states.filter((w) => w.testable);
  const adjusted = adjust(
    testable.map((w) => w.pValue!),
    rates.adjust,
  );
  const adjustedOf = new Map(testable.map((w, i) => [w, Math.min(1, adjusted[i])]));
  const windows = rates.states.map((w): RateWindow => {
    const adjustedPValue = adjustedOf.get(w) ?? null;
    return { ...w, adjustedPValue, rateFlagged: adjustedPValue !== null && adjustedPValue <= rates.alpha };
  });
  const episodes = flaggedRuns(windows, (w) => w.rateFlagged).map((run) => ({
    start: run[0].start,
    end: runEnd(run),
    windows: run.length,
    peak: peakOf(run),
  }));
  return { windows, episodes };
}

function testRates(rates: PreparedRates, lo: number, hi: number): RateWindow[] {
  const out: RateWindow[] = [];
  const G = rates.units.groups.length;
  const C = rates.tallies.categories.length;
  const defectsNow = new SlidingSum(rates.tallies, rates.windowDays);
  const unitsNow = new SlidingSum(rates.units, rates.windowDays);
  const history = rates.kind === "history";
  const defectsBefore = history ? new SlidingSum(rates.tallies, rates.baselineDays) : null;
  const unitsBefore = history ? new SlidingSum(rates.units, rates.baselineDays) : null;
  for (let k = lo; k < hi; k++) {
    const start = rates.starts[k];
    defectsNow.moveTo(start);
    unitsNow.moveTo(start);
    let labels = rates.units.groups;
    let defects = rowSums(defectsNow.sums, G, C);
    let units = Array.from(unitsNow.sums);
    if (defectsBefore && unitsBefore) {
      defectsBefore.moveTo(start - rates.baselineDays);
      unitsBefore.moveTo(start - rates.baselineDays);
      labels = HISTORY_ROWS;
      defects = [defects[0], rowSums(defectsBefore.sums, 1, C)[0]];
      units = [units[0], unitsBefore.sums[0]];
    }
    out.push(rateWindow(isoDate(start), isoDate(start + rates.windowDays - 1), labels, defects, units));
  }
  return out;
}

function rowSums(sums: Float64Array, rows: number, columns: number): number[] {
  const out = new Array<number>(rows).fill(0);
  for (let i = 0; i < rows; i++) for (let j = 0; j < columns; j++) out[i] += sums[i * columns + j];
  return out;
}

/**
 * One window's rate test: groups with inspected units are tested with lib/stats's
 * rateHomogeneity (defects ~ Poisson(units · rate), H0: one rate for all groups), and
 * each gets its u-chart limits around the pooled rate (Montgomery, Introduction to
 * Statistical Quality Control, §7.3.2). Groups without units are listed as dropped.
 * Cost: O(groups).
 *
 * @example
 * rateWindow("2026-01-05", "2026-01-11", ["L1", "L2"], [120, 60], [10000, 10000]).groups[0].outside; // "above" (0.012 > 0.01185)
 */
export function rateWindow(start: string, end: string, labels: string[], defects: number[], units: number[]): RateWindow {
  const kept = labels.map((_, i) => i).filter((i) => units[i] > 0);
  const groups: RateGroup[] = labels.map((group, i) => ({
    group,
    defects: defects[i],
    units: units[i],
    defectsPerUnit: units[i] > 0 ? defects[i] / units[i] : null,
    lower: null,
    upper: null,
    outside: null,
  }));
  const window: RateWindow = {
    start,
    end,
    groups,
    droppedGroups: labels.filter((_, i) => !(units[i] > 0)),
    testable: false,
    reason: null,
    pooledRate: null,
    statistic: null,
    df: null,
    pValue: null,
    adjustedPValue: null,
    rateFlagged: false,
  };
  const totalDefects = kept.reduce((s, i) => s + defects[i], 0);
  if (kept.length < 2) window.reason = "fewer than 2 groups with inspected units in the window";
  else if (totalDefects === 0) window.reason = "no defects recorded in the window";
  if (window.reason) return window;
  const test = rateTest(
    kept.map((i) => defects[i]),
    kept.map((i) => units[i]),
  );
  kept.forEach((i, k) => {
    const g = groups[i];
    g.lower = test.lower[k];
    g.upper = test.upper[k];
    g.outside = test.outside[k];
  });
  Object.assign(window, { testable: true, pooledRate: test.pooledRate, statistic: test.statistic, df: test.df, pValue: test.pValue });
  return window;
}

/**
 * Buckets units rows into a day × group × 1 cube aligned with a tally cube (same days and
 * groups; units of groups the tally cube does not have are ignored). O(rows).
 *
 * @example
 * bucketUnits([{ date: "2026-01-01", line: "L1", shift: "A", units: 900 }], tallyCube, "line").data[0]; // 900
 */
export function bucketUnits(rows: readonly UnitsRow[], like: Cube, groupBy: "line" | "shift", lines?: readonly string[], shifts?: readonly string[]): Cube {
  const cube = createCube(like.firstDay, like.days, like.groups, ["units"]);
  const groupIndex = new Map(like.groups.map((g, i) => [g, i]));
  const lineFilter = lines ? new Set(lines) : null;
  const shiftFilter = shifts ? new Set(shifts) : null;
  const last = like.firstDay + like.days - 1;
  rows.forEach((r, i) => {
    if (!(Number.isInteger(r.units) && r.units >= 0)) throw new RangeError(`units row ${i + 1}: units must be a whole number ≥ 0`);
    if (lineFilter && !lineFilter.has(r.line)) return;
    if (shiftFilter && !shiftFilter.has(r.shift)) return;
    const g = groupIndex.get(groupBy === "line" ? r.line : r.shift);
    const day = dayNumber(r.date);
    if (g === undefined || day < like.firstDay || day > last) return;
    cube.data[(day - like.firstDay) * like.groups.length + g] += r.units;
  });
  return cube;
}

/**
 * Defect rate beside mix: per window, defects per inspected unit for each group, the
 * Poisson rate homogeneity test and u-chart limits (lib/stats rateHomogeneity), adjusted
 * across windows on their own. The mix test conditions on each group's total, so it
 * cannot see a change of rate alone (a line making 80% more of every defect keeps its
 * mix): such a change shows here as `rateFlagged`, never as a mix flag. Same windows,
 * filters and calendar as {@link scanWindows} with the same config.
 *
 * Cost: the bucketing of both inputs, then O(groups · categories) per window.
 *
 * @example
 * // test/monitor/scenarios.test.ts plant, seed 12: L02 makes 80% more of everything 2026-03-06 … 03-20
 * const r = scanRates(tallies, units, { compare: "line", windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0 });
 * r.episodes[0].peak.groups.find((g) => g.group === "L02");
 * // { defects: 810, units: 42000, defectsPerUnit: 0.01929, lower: 0.01007, upper: 0.01324, outside: "above" }
 */
export function scanRates(rows: readonly TallyRow[], units: readonly UnitsRow[], config: ScanConfig): RateResult {
  const c = resolveScanConfig(config);
  const tallies = bucketTallies(rows, {
    groupBy: c.compare,
    lines: c.lines,
    shifts: c.shifts,
    categories: c.categories,
    fromDay: c.from === undefined ? undefined : dayNumber(c.from),
    toDay: c.to === undefined ? undefined : dayNumber(c.to),
  });
  if (!tallies) return { windows: [], episodes: [] };
  const prepared = prepareRates({
    kind: "groups",
    tallies,
    units: bucketUnits(units, tallies, c.compare, c.lines, c.shifts),
    starts: windowStarts(tallies.firstDay, tallies.firstDay + tallies.days - 1, c.windowDays, c.stepDays),
    windowDays: c.windowDays,
    baselineDays: 0,
    alpha: c.alpha,
    adjust: c.adjust,
  });
  return finishRates(prepared);
}
