import { byMagnitudeThenExcess } from "./drivers";
import { flaggedRuns, peakOf, runEnd } from "./runs";
import type { Episode, EpisodeDriver, ScanWindow } from "./types";

/**
 * Merges flagged windows into episodes: consecutive flagged windows (in start order)
 * join when the next one starts on or before the day after the current episode ends,
 * so overlapping or touching windows tell one story instead of many. The peak is the
 * window with the smallest adjusted p (ties: smaller raw p, then earlier); the drivers
 * are the cells ranked by how many of the episode's windows they drive, then by their
 * largest |adjusted residual|.
 *
 * Cost: O(windows + drivers · log drivers).
 *
 * @example
 * // flagged: 03-01…03-07, 03-05…03-11, 03-12…03-18 (touches), 03-20…03-26 (a free day before it)
 * buildEpisodes(windows).map((e) => [e.start, e.end, e.windows]);
 * // [["2026-03-01", "2026-03-18", 3], ["2026-03-20", "2026-03-26", 1]]  (test/monitor/episodes.test.ts)
 */
export function buildEpisodes(windows: readonly ScanWindow[]): Episode[] {
  return flaggedRuns(windows, (w) => w.flagged).map((run) => ({
    start: run[0].start,
    end: runEnd(run),
    windows: run.length,
    peak: peakOf(run),
    drivers: rankDrivers(run),
  }));
}

function rankDrivers(run: ScanWindow[]): EpisodeDriver[] {
  const cells = new Map<string, EpisodeDriver>();
  for (const w of run) {
    for (const d of w.drivers) {
      const key = `${d.row}\u0000${d.category}`;
      const seen = cells.get(key);
      if (!seen) cells.set(key, { row: d.row, category: d.category, windows: 1, adjustedResidual: d.adjustedResidual });
      else {
        seen.windows++;
        if (Math.abs(d.adjustedResidual) > Math.abs(seen.adjustedResidual)) seen.adjustedResidual = d.adjustedResidual;
      }
    }
  }
  return [...cells.values()].sort((a, b) => b.windows - a.windows || byMagnitudeThenExcess(a.adjustedResidual, b.adjustedResidual));
}
