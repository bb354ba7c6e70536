import type { Episode as ScannedEpisode, ScanResult, ScanWindow } from "@/lib/monitor/types";
import type { ComparisonInfo, EpisodeAnalysis, WindowAnalysis } from "./types";

/**
 * What the episode records need from the monitoring engine: a comparison's live scan
 * and the full table analysis of one of its windows. The default implementation calls
 * the scan service (lib/monitor/service.ts); tests and the command line use the same.
 */
export interface EpisodeSource {
  comparison(idOrCode: number | string): Promise<ComparisonInfo | null>;
  /** Active saved comparisons. */
  comparisons(): Promise<ComparisonInfo[]>;
  scan(comparison: ComparisonInfo): Promise<ScanResult>;
  /** The window starting on `start`, analysed in full; null when the plan has no such window. */
  window(comparison: ComparisonInfo, start: string): Promise<WindowAnalysis | null>;
}

/** The flagged windows that make up an episode (episodes never share a flagged window). */
export function episodeWindows(scan: ScanResult, range: { start: string; end: string }): ScanWindow[] {
  return scan.windows.filter((w) => w.flagged && w.start >= range.start && w.end <= range.end);
}

/** The snapshot content for a scanned episode: its range, drivers, and the peak window in full. */
export async function analysisOf(
  source: EpisodeSource,
  comparison: ComparisonInfo,
  episode: ScannedEpisode,
): Promise<EpisodeAnalysis> {
  const peak = await source.window(comparison, episode.peak.start);
  return {
    version: 1,
    comparison: { id: comparison.id, code: comparison.code, name: comparison.name, compare: comparison.compare },
    config: comparison.config,
    episode: {
      start: episode.start,
      end: episode.end,
      windows: episode.windows,
      peakStart: episode.peak.start,
      peakEnd: episode.peak.end,
      minAdjustedP: episode.peak.adjustedPValue ?? 1,
      drivers: episode.drivers,
    },
    peak,
  };
}

/** The scanned episode that overlaps a date range (the live version of a record), if any. */
export function overlappingEpisode(scan: ScanResult, range: { start: string; end: string }): ScannedEpisode | null {
  return scan.episodes.find((e) => e.start <= range.end && e.end >= range.start) ?? null;
}
