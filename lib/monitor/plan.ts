/**
 * Window starts of a scan, as day numbers: the first start is `firstDay + leadDays`,
 * then every `stepDays`; a window exists only if its last day (start + windowDays − 1)
 * is on or before `lastDay`, so the scan never reports a half-filled trailing window.
 * `leadDays` leaves room before the first window (the baseline of a history scan).
 *
 * @example
 * windowStarts(0, 9, 7, 1); // Int32Array [0, 1, 2, 3]
 */
export function windowStarts(
  firstDay: number,
  lastDay: number,
  windowDays: number,
  stepDays: number,
  leadDays = 0,
): Int32Array {
  const first = firstDay + leadDays;
  const span = lastDay - (first + windowDays - 1);
  if (span < 0) return new Int32Array(0);
  const count = Math.floor(span / stepDays) + 1;
  const starts = new Int32Array(count);
  for (let k = 0; k < count; k++) starts[k] = first + k * stepDays;
  return starts;
}

/**
 * Indices [lo, hi] of the windows (from `starts`, ascending) whose days include `day`,
 * or null when none does. Used to recompute only what a late entry touches.
 *
 * @example
 * windowsCovering(Int32Array.from([0, 1, 2, 3]), 7, 2); // [0, 2]
 */
export function windowsCovering(starts: Int32Array, windowDays: number, day: number): [number, number] | null {
  // A window [s, s + w − 1] covers day iff day − w + 1 ≤ s ≤ day.
  const lo = lowerBound(starts, day - windowDays + 1);
  const hi = lowerBound(starts, day + 1) - 1;
  return lo <= hi ? [lo, hi] : null;
}

/**
 * Index of the first element ≥ value in an ascending array (its length when none);
 * binary search, O(log n).
 *
 * @example
 * lowerBound(Int32Array.from([0, 2, 4]), 3); // 2
 */
export function lowerBound(sorted: Int32Array, value: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (sorted[mid] < value) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
