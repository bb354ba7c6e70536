import { dayNumber } from "./dates";
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
 * buildEpisodes(windows).map((e) => [e.start, e.end, e.windows]); // [["2026-03-02", "2026-03-12", 5]]
 */
export function buildEpisodes(windows: readonly ScanWindow[]): Episode[] {
  const episodes: Episode[] = [];
  let run: ScanWindow[] = [];
  let runEnd = -Infinity;
  for (const w of windows) {
    if (!w.flagged) continue;
    const start = dayNumber(w.start);
    if (run.length > 0 && start > runEnd + 1) {
      episodes.push(episodeOf(run));
      run = [];
    }
    run.push(w);
    runEnd = Math.max(runEnd, dayNumber(w.end));
  }
  if (run.length > 0) episodes.push(episodeOf(run));
  return episodes;
}

function episodeOf(run: ScanWindow[]): Episode {
  let end = run[0].end;
  for (const w of run) if (w.end > end) end = w.end;
  return { start: run[0].start, end, windows: run.length, peak: peakOf(run), drivers: rankDrivers(run) };
}

function peakOf(run: ScanWindow[]): ScanWindow {
  let peak = run[0];
  for (const w of run) {
    const better =
      w.adjustedPValue! < peak.adjustedPValue! ||
      (w.adjustedPValue === peak.adjustedPValue && w.pValue! < peak.pValue!);
    if (better) peak = w;
  }
  return peak;
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
  return [...cells.values()].sort(
    (a, b) => b.windows - a.windows || Math.abs(b.adjustedResidual) - Math.abs(a.adjustedResidual),
  );
}
