import { CodeIndex, badCount, createCube, finalOrder, type BucketSpec, type Cube } from "./cube";
import { dayNumberCache } from "./dates";
import type { TallyRow } from "./types";

/**
 * Returned when the rows turn out not to be sorted by date.
 *
 * @example
 * bucketSortedTallies([], { groupBy: "line" }) === UNSORTED; // true
 */
export const UNSORTED = Symbol("unsorted");

// Provisional cubes larger than this (cells) are left to the staged path.
const MAX_PROVISIONAL_CELLS = 64 * 1024 * 1024;

// Reused from call to call, like the staging buffers (fresh large buffers make V8 run
// full collections, costly with millions of row objects alive).
let scratch = new Int32Array(0);

interface Layout {
  groupCap: number;
  categoryCap: number;
  data: Int32Array;
}

/**
 * The one-pass bucketing for rows sorted by date: the first and last rows fix the day
 * range, so counts go straight into a provisional cube laid out in order of first
 * appearance (capacities grown in powers of two as codes appear), which is then permuted
 * into the final code order and trimmed to the kept days. No per-row staging, no second
 * pass over the rows. Returns UNSORTED, having done nothing lasting, as soon as a date
 * goes backwards (or the layout would be too large), for the caller's general path.
 *
 * Cost: one pass over the rows plus one over the cube's cells.
 *
 * @example
 * bucketSortedTallies([{ date: "2026-01-02", line: "L1", shift: "A", category: "X", count: 1 }, { date: "2026-01-01", line: "L1", shift: "A", category: "X", count: 1 }], { groupBy: "line" }); // UNSORTED
 */
export function bucketSortedTallies(rows: readonly TallyRow[], spec: BucketSpec): Cube | null | typeof UNSORTED {
  const n = rows.length;
  if (n === 0) return UNSORTED;
  const parseDay = dayNumberCache();
  const from = spec.fromDay ?? -Infinity;
  const to = spec.toDay ?? Infinity;
  const spanFirst = Math.max(parseDay(rows[0].date), from);
  const spanLast = Math.min(parseDay(rows[n - 1].date), to);
  if (!(spanLast >= spanFirst)) return UNSORTED;
  const spanDays = spanLast - spanFirst + 1;
  let layout = allocate(spanDays, 8, 16);
  if (!layout) return UNSORTED;
  const groups = new CodeIndex();
  const categories = new CodeIndex();
  const lineFilter = spec.lines ? new Set(spec.lines) : null;
  const shiftFilter = spec.shifts ? new Set(spec.shifts) : null;
  const categoryFilter = spec.categories ? new Set(spec.categories) : null;
  const byLine = spec.groupBy === "line";
  let lastDate = "";
  let lastDay = -Infinity;
  let inRange = false;
  let dayBase = 0;
  let lastGroup: string | null = null;
  let groupBase = 0;
  let minDay = Infinity;
  let maxDay = -Infinity;
  for (let i = 0; i < n; i++) {
    const row = rows[i];
    const date = row.date;
    if (date !== lastDate) {
      const day = parseDay(date);
      if (day < lastDay) return UNSORTED;
      lastDay = day;
      lastDate = date;
      inRange = day >= from && day <= to;
      dayBase = (day - spanFirst) * layout.groupCap * layout.categoryCap;
    }
    const count = row.count;
    if ((count | 0) !== count || count < 0) badCount(count, i);
    if (!inRange) continue;
    if (lineFilter !== null && !lineFilter.has(row.line)) continue;
    if (shiftFilter !== null && !shiftFilter.has(row.shift)) continue;
    if (categoryFilter !== null && !categoryFilter.has(row.category)) continue;
    const group = byLine ? row.line : row.shift;
    if (group !== lastGroup) {
      const g = groups.of(group);
      if (g >= layout.groupCap) {
        layout = grow(layout, spanDays, layout.groupCap * 2, layout.categoryCap);
        if (!layout) return UNSORTED;
        dayBase = (lastDay - spanFirst) * layout.groupCap * layout.categoryCap;
      }
      groupBase = g * layout.categoryCap;
      lastGroup = group;
    }
    const c = categories.of(row.category);
    if (c >= layout.categoryCap) {
      layout = grow(layout, spanDays, layout.groupCap, layout.categoryCap * 2);
      if (!layout) return UNSORTED;
      dayBase = (lastDay - spanFirst) * layout.groupCap * layout.categoryCap;
      groupBase = groups.of(group) * layout.categoryCap;
    }
    layout.data[dayBase + groupBase + c] += count;
    if (lastDay < minDay) minDay = lastDay;
    maxDay = lastDay;
  }
  return assemble(layout, spanFirst, spec, groups.codes, categories.codes, minDay, maxDay);
}

function allocate(days: number, groupCap: number, categoryCap: number): Layout | null {
  const cells = days * groupCap * categoryCap;
  if (cells > MAX_PROVISIONAL_CELLS) return null;
  if (scratch.length < cells) scratch = new Int32Array(Math.max(cells, Math.ceil(scratch.length * 1.5)));
  const data = scratch.subarray(0, cells);
  data.fill(0);
  return { groupCap, categoryCap, data };
}

// Re-lays the provisional cube out with larger capacities (rare: a new code past a power of two).
function grow(old: Layout, days: number, groupCap: number, categoryCap: number): Layout | null {
  const copy = Int32Array.from(old.data);
  const layout = allocate(days, groupCap, categoryCap);
  if (!layout) return null;
  for (let d = 0; d < days; d++) {
    for (let g = 0; g < old.groupCap; g++) {
      const src = (d * old.groupCap + g) * old.categoryCap;
      layout.data.set(copy.subarray(src, src + old.categoryCap), (d * groupCap + g) * categoryCap);
    }
  }
  return layout;
}

function assemble(
  layout: Layout,
  spanFirst: number,
  spec: BucketSpec,
  groupCodes: string[],
  categoryCodes: string[],
  minDay: number,
  maxDay: number,
): Cube | null {
  const firstDay = spec.fromDay ?? minDay;
  const lastDay = spec.toDay ?? maxDay;
  if (!Number.isFinite(firstDay) || !Number.isFinite(lastDay) || lastDay < firstDay) return null;
  const groups = finalOrder(groupCodes, spec.groupBy === "line" ? spec.lines : spec.shifts);
  const categories = finalOrder(categoryCodes, spec.categories);
  const cube = createCube(firstDay, lastDay - firstDay + 1, groups.codes, categories.codes);
  const columns = categories.codes.length;
  const { groupCap, categoryCap, data } = layout;
  // Days of the cube that the provisional span holds (from/to may reach beyond the rows).
  const lo = Math.max(firstDay, spanFirst);
  const hi = Math.min(lastDay, minDay === Infinity ? lo - 1 : maxDay);
  for (let day = lo; day <= hi; day++) {
    const src = (day - spanFirst) * groupCap * categoryCap;
    const dst = (day - firstDay) * cube.width;
    for (let g = 0; g < groupCodes.length; g++) {
      const srcRow = src + g * categoryCap;
      const dstRow = dst + groups.remap[g] * columns;
      for (let c = 0; c < categoryCodes.length; c++) cube.data[dstRow + categories.remap[c]] = data[srcRow + c];
    }
  }
  return cube;
}
