import { dayNumber } from "./dates";

/**
 * Groups flagged windows (ordered by start) into runs: the next flagged window joins the
 * run when it starts on or before the day after the run's end, i.e. windows that overlap
 * or touch. Shared by mix episodes and rate episodes.
 *
 * Cost: O(windows).
 *
 * @example
 * flaggedRuns([{ start: "2026-01-01", end: "2026-01-07", f: true }, { start: "2026-01-08", end: "2026-01-14", f: true }], (w) => w.f).length; // 1
 */
export function flaggedRuns<W extends { start: string; end: string }>(windows: readonly W[], flagged: (w: W) => boolean): W[][] {
  const runs: W[][] = [];
  let run: W[] = [];
  let runEnd = -Infinity;
  for (const w of windows) {
    if (!flagged(w)) continue;
    if (run.length > 0 && dayNumber(w.start) > runEnd + 1) {
      runs.push(run);
      run = [];
    }
    run.push(w);
    runEnd = Math.max(runEnd, dayNumber(w.end));
  }
  if (run.length > 0) runs.push(run);
  return runs;
}

/**
 * The latest end date of a run of windows.
 *
 * @example
 * runEnd([{ end: "2026-01-07" }, { end: "2026-01-08" }]); // "2026-01-08"
 */
export function runEnd(run: readonly { end: string }[]): string {
  let end = run[0].end;
  for (const w of run) if (w.end > end) end = w.end;
  return end;
}

/**
 * The window with the smallest adjusted p; ties (BH gives many): smaller raw p, then
 * earlier. O(run length).
 *
 * @example
 * peakOf([{ adjustedPValue: 0.01, pValue: 0.002 }, { adjustedPValue: 0.01, pValue: 0.001 }]).pValue; // 0.001
 */
export function peakOf<W extends { adjustedPValue: number | null; pValue: number | null }>(run: readonly W[]): W {
  let peak = run[0];
  for (const w of run) {
    const better =
      w.adjustedPValue! < peak.adjustedPValue! || (w.adjustedPValue === peak.adjustedPValue && w.pValue! < peak.pValue!);
    if (better) peak = w;
  }
  return peak;
}
