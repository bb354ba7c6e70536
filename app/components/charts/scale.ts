/**
 * Axis ticks shared by a chart's server-drawn first paint and its interactive version,
 * so that both draw the same axis and the swap from one to the other does not move.
 */

/** A step of 1, 2, 2.5 or 5 × 10^k near span / count. */
function niceStep(span: number, count: number): number {
  const raw = span / Math.max(1, count);
  const power = 10 ** Math.floor(Math.log10(raw));
  const f = raw / power;
  return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 2.5 ? 2.5 : f <= 5 ? 5 : 10) * power;
}

/**
 * Round ticks covering [min, max] with about `count` intervals: the domain is widened
 * to the outer ticks. A zero or non-finite span gets a unit-wide domain around min.
 *
 * @example
 * niceTicks(0, 11.7); // { domain: [0, 12], ticks: [0, 3, 6, 9, 12] }
 */
export function niceTicks(min: number, max: number, count = 4): { domain: [number, number]; ticks: number[] } {
  if (!Number.isFinite(min) || !Number.isFinite(max)) throw new RangeError(`axis bounds must be finite, got ${min} and ${max}`);
  if (max < min) [min, max] = [max, min];
  if (max - min < 1e-12) {
    const lo = min === 0 ? 0 : min - Math.abs(min) * 0.1;
    max = min === 0 ? 1 : min + Math.abs(min) * 0.1;
    min = lo;
  }
  const step = niceStep(max - min, count);
  const lo = Math.floor(min / step + 1e-9) * step;
  const hi = Math.ceil(max / step - 1e-9) * step;
  const ticks: number[] = [];
  // Rounded to the step's precision so that 0.1 + 0.2 does not print as 0.30000000000000004.
  const digits = Math.max(0, -Math.floor(Math.log10(step)) + 2);
  for (let k = 0; lo + k * step <= hi + step * 1e-9; k++) ticks.push(Number((lo + k * step).toFixed(digits)));
  return { domain: [ticks[0], ticks[ticks.length - 1]], ticks };
}

/**
 * Formats axis values with as many decimals as the ticks need, the same for every tick.
 *
 * @example
 * tickFormat([0, 0.025, 0.05])(0.05); // "0.050"
 */
export function tickFormat(ticks: readonly number[]): (v: number) => string {
  const decimals = (t: number) => (String(t).split(".")[1] ?? "").length;
  const digits = Math.min(8, Math.max(0, ...ticks.map(decimals)));
  return (v: number) => v.toFixed(digits);
}

/**
 * Grid-line generators for recharts' CartesianGrid that place horizontal lines at the
 * given ticks from the plot's offset and draw no vertical lines. Without them the grid
 * asks recharts to recompute the axes' ticks, which measures every tick label in the
 * page's layout (a forced layout per label, per render) — the largest single cost of
 * drawing the timeline in the browser.
 *
 * @example
 * gridAt([0, 5, 10], [0, 10]).horizontal({ offset: { top: 10, height: 100 } }); // [110, 60, 10]
 */
export function gridAt(ticks: readonly number[], domain: readonly [number, number]) {
  const [lo, hi] = domain;
  return {
    horizontal: ({ offset }: { offset: { top?: number; height?: number } }): number[] =>
      ticks.map((t) => (offset.top ?? 0) + (offset.height ?? 0) * (1 - (t - lo) / (hi - lo || 1))),
    vertical: (): number[] => [],
  };
}
