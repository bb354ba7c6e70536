import { dayNumberCache } from "./dates";
import type { TallyRow } from "./types";

/**
 * Daily counts as one flat typed array, day × group × category: the layout the sliding
 * window sums walk through with unit stride, with no per-cell objects to allocate or chase.
 */
export interface Cube {
  /** Day number of slice 0. */
  firstDay: number;
  /** Number of day slices (the cube covers firstDay … firstDay + days − 1). */
  days: number;
  /** Row codes (lines, shifts, or "current"/"baseline" in derived tables), in table order. */
  groups: string[];
  categories: string[];
  /** groups.length · categories.length, the size of one day's slice. */
  width: number;
  /** data[(day − firstDay) · width + g · categories.length + c]. */
  data: Float64Array;
}

/** Allocates an all-zero cube. */
export function createCube(firstDay: number, days: number, groups: string[], categories: string[]): Cube {
  const width = groups.length * categories.length;
  return { firstDay, days, groups, categories, width, data: new Float64Array(days * width) };
}

/** What to keep from the rows and how to group them. */
export interface BucketSpec {
  groupBy: "line" | "shift";
  lines?: readonly string[];
  shifts?: readonly string[];
  categories?: readonly string[];
  /** Day numbers bounding the cube; default the data's first and last date. */
  fromDay?: number;
  toDay?: number;
}

// Pass 1 output: one entry per kept row, indices in order of first appearance.
interface Staged {
  kept: number;
  day: Int32Array;
  group: Int32Array;
  category: Int32Array;
  count: Float64Array;
  groupCodes: string[];
  categoryCodes: string[];
  minDay: number;
  maxDay: number;
}

function indexer(codes: string[]): (code: string) => number {
  const index = new Map<string, number>();
  return (code) => {
    let i = index.get(code);
    if (i === undefined) {
      i = codes.length;
      codes.push(code);
      index.set(code, i);
    }
    return i;
  };
}

function checkCount(count: unknown, at: number): number {
  if (typeof count !== "number" || !Number.isInteger(count) || count < 0) {
    throw new RangeError(`row ${at + 1}: count must be a whole number ≥ 0 (got ${String(count)})`);
  }
  return count;
}

function stage(rows: readonly TallyRow[], spec: BucketSpec): Staged {
  const n = rows.length;
  const out: Staged = {
    kept: 0,
    day: new Int32Array(n),
    group: new Int32Array(n),
    category: new Int32Array(n),
    count: new Float64Array(n),
    groupCodes: [],
    categoryCodes: [],
    minDay: Infinity,
    maxDay: -Infinity,
  };
  const parseDay = dayNumberCache();
  const groupIndex = indexer(out.groupCodes);
  const categoryIndex = indexer(out.categoryCodes);
  const lines = spec.lines ? new Set(spec.lines) : null;
  const shifts = spec.shifts ? new Set(spec.shifts) : null;
  const categories = spec.categories ? new Set(spec.categories) : null;
  const from = spec.fromDay ?? -Infinity;
  const to = spec.toDay ?? Infinity;
  const byLine = spec.groupBy === "line";
  let lastDate = "";
  let lastDay = 0;
  for (let i = 0; i < n; i++) {
    const row = rows[i];
    // Rows usually arrive sorted by date: skip the map lookup while the date repeats.
    const date = row.date;
    if (date !== lastDate) {
      lastDay = parseDay(date);
      lastDate = date;
    }
    const count = checkCount(row.count, i);
    if (lastDay < from || lastDay > to) continue;
    if (lines !== null && !lines.has(row.line)) continue;
    if (shifts !== null && !shifts.has(row.shift)) continue;
    if (categories !== null && !categories.has(row.category)) continue;
    const k = out.kept++;
    out.day[k] = lastDay;
    out.group[k] = groupIndex(byLine ? row.line : row.shift);
    out.category[k] = categoryIndex(row.category);
    out.count[k] = count;
    if (lastDay < out.minDay) out.minDay = lastDay;
    if (lastDay > out.maxDay) out.maxDay = lastDay;
  }
  return out;
}

// Final order of codes: the filter's order when one is given (absent codes included, so
// they show up as dropped), else sorted, so the result never depends on row order.
function finalOrder(seen: string[], filter: readonly string[] | undefined): { codes: string[]; remap: Int32Array } {
  const codes = filter ? [...new Set(filter)] : [...seen].sort();
  const position = new Map(codes.map((c, i) => [c, i]));
  const remap = Int32Array.from(seen, (c) => position.get(c)!);
  return { codes, remap };
}

/**
 * Buckets tally rows into a {@link Cube} grouped by line or shift, applying the filters
 * and date bounds. Returns null when no row survives and no bounds fix the range.
 *
 * Cost: one pass over the rows (a map lookup for line, category and each new date),
 * then one pass over the kept rows into the typed array; ≈ 100 ms for two million rows.
 *
 * @example
 * bucketTallies([{ date: "2026-01-01", line: "L1", shift: "A", category: "SCR", count: 2 }], { groupBy: "line" })!.data; // Float64Array [2]
 */
export function bucketTallies(rows: readonly TallyRow[], spec: BucketSpec): Cube | null {
  const staged = stage(rows, spec);
  const firstDay = spec.fromDay ?? staged.minDay;
  const lastDay = spec.toDay ?? staged.maxDay;
  if (!Number.isFinite(firstDay) || !Number.isFinite(lastDay) || lastDay < firstDay) return null;
  const groups = finalOrder(staged.groupCodes, spec.groupBy === "line" ? spec.lines : spec.shifts);
  const categories = finalOrder(staged.categoryCodes, spec.categories);
  const cube = createCube(firstDay, lastDay - firstDay + 1, groups.codes, categories.codes);
  const columns = categories.codes.length;
  const { data, width } = cube;
  for (let k = 0; k < staged.kept; k++) {
    const cell = (staged.day[k] - firstDay) * width + groups.remap[staged.group[k]] * columns;
    data[cell + categories.remap[staged.category[k]]] += staged.count[k];
  }
  return cube;
}
