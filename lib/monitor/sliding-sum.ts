import type { Cube } from "./cube";

/**
 * The sum of a cube over a run of `length` consecutive days, moved along the calendar
 * incrementally: moving from start a to start b adds only the days entering and
 * subtracts only the days leaving, so a daily-stepping 7-day scan touches each day
 * twice instead of seven times. Days outside the cube count as zero, which is what a
 * baseline reaching back before the data needs.
 *
 * Sums of whole counts stay exact in doubles (below 2⁵³), so add-then-subtract never
 * drifts.
 *
 * Cost: O(|b − a| · width) per move, capped at O(length · width) when the runs do not
 * overlap (the sum is then rebuilt from zero).
 *
 * @example
 * // cube: 3 days of a 2 × 2 table holding 1…4, 5…8, 9…12
 * const s = new SlidingSum(cube, 2);
 * s.moveTo(cube.firstDay);     // s.sums = [6, 8, 10, 12]
 * s.moveTo(cube.firstDay + 1); // s.sums = [14, 16, 18, 20]: day 3 added, day 1 subtracted
 */
export class SlidingSum {
  /** The current sums, width = groups · categories. Read it, don't keep it: it is reused. */
  readonly sums: Float64Array;
  private start: number | null = null;

  constructor(
    private readonly cube: Cube,
    private readonly length: number,
  ) {
    this.sums = new Float64Array(cube.width);
  }

  /** Makes `sums` the total over days [start, start + length − 1]. */
  moveTo(start: number): void {
    const previous = this.start;
    this.start = start;
    if (previous === null || Math.abs(start - previous) >= this.length) {
      this.sums.fill(0);
      this.addDays(start, start + this.length - 1, 1);
      return;
    }
    if (start > previous) {
      this.addDays(previous, start - 1, -1);
      this.addDays(previous + this.length, start + this.length - 1, 1);
    } else if (start < previous) {
      this.addDays(start + this.length, previous + this.length - 1, -1);
      this.addDays(start, previous - 1, 1);
    }
  }

  private addDays(fromDay: number, toDay: number, sign: 1 | -1): void {
    const { data, width, firstDay, days } = this.cube;
    const lo = Math.max(fromDay - firstDay, 0);
    const hi = Math.min(toDay - firstDay, days - 1);
    const sums = this.sums;
    for (let d = lo; d <= hi; d++) {
      const base = d * width;
      if (sign === 1) for (let j = 0; j < width; j++) sums[j] += data[base + j];
      else for (let j = 0; j < width; j++) sums[j] -= data[base + j];
    }
  }
}
