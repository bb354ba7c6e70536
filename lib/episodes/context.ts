import { episodeAudit, episodeNotes, episodeSnapshots, getEpisode, type AuditView, type EpisodeNoteView, type EpisodeRecord, type EpisodeSnapshotView } from "@/lib/db/episodes";
import { loadMasterData } from "@/lib/db/plant";
import { addDays } from "@/lib/dates";
import type { ScanResult } from "@/lib/monitor/types";
import { namesFrom, type Names } from "@/lib/review/names";
import { generateReading, type Reading } from "@/lib/review/reading";
import { statusSteps, type BriefData, type StatusStep, type TimelinePoint } from "./brief-data";
import { diffSnapshot, type SnapshotDiff } from "./snapshot-diff";
import { overlappingEpisode, type EpisodeSource } from "./source";
import type { ComparisonInfo, WindowAnalysis } from "./types";

/**
 * Everything one episode's screen and brief show, gathered in one place: the record,
 * its comparison, the live scan's view of it, the snapshot chosen for then-vs-now, notes
 * and the audit trail.
 */
export interface EpisodeContext {
  record: EpisodeRecord;
  comparison: ComparisonInfo;
  scan: ScanResult;
  live: { start: string; end: string; windows: number; peakStart: string } | null;
  /** Live analysis of the record's peak window (the window the snapshots describe). */
  peak: WindowAnalysis | null;
  snapshots: EpisodeSnapshotView[];
  /** The snapshot compared with the live result (the chosen one, else the latest). */
  snapshot: EpisodeSnapshotView | null;
  diff: SnapshotDiff | null;
  notes: EpisodeNoteView[];
  audit: AuditView[];
  history: StatusStep[];
  names: Names;
}

export async function loadEpisodeContext(
  source: EpisodeSource,
  id: number,
  options: { snapshotId?: number } = {},
): Promise<EpisodeContext | null> {
  const record = await getEpisode(id);
  if (!record) return null;
  const comparison = await source.comparison(record.comparison.id);
  if (!comparison) return null;
  const [scan, snapshots, notes, audit, plant] = await Promise.all([
    source.scan(comparison),
    episodeSnapshots(id),
    episodeNotes(id),
    episodeAudit(id),
    loadMasterData(),
  ]);
  const liveEpisode = overlappingEpisode(scan, record);
  const live = liveEpisode
    ? { start: liveEpisode.start, end: liveEpisode.end, windows: liveEpisode.windows, peakStart: liveEpisode.peak.start }
    : null;
  const snapshot = snapshots.find((s) => s.id === options.snapshotId) ?? snapshots[snapshots.length - 1] ?? null;
  const windowStart = snapshot?.analysis.episode.peakStart ?? record.peakStart;
  const peak = await source.window(comparison, windowStart);
  const diff = snapshot ? diffSnapshot(snapshot.analysis, peak, live) : null;
  return {
    record,
    comparison,
    scan,
    live,
    peak,
    snapshots,
    snapshot,
    diff,
    notes,
    audit,
    history: statusSteps(audit),
    names: namesFrom(plant),
  };
}

/** Windows of the scan around an episode: from a margin before its start to a margin after its end. */
export function timelineAround(scan: ScanResult, range: { start: string; end: string }, windowDays: number): TimelinePoint[] {
  const margin = Math.max(14, 2 * windowDays);
  const from = addDays(range.start, -margin);
  const to = addDays(range.end, margin);
  return scan.windows
    .filter((w) => w.start >= from && w.end <= to)
    .map((w) => ({ start: w.start, end: w.end, testable: w.testable, flagged: w.flagged, pValue: w.pValue, adjustedPValue: w.adjustedPValue }));
}

/** The plain-language reading of a window (lib/review's generator), with display names. */
export function readingOf(ctx: Pick<EpisodeContext, "comparison" | "names" | "record">, w: WindowAnalysis | null): Reading | null {
  if (!w) return null;
  const config = ctx.comparison.config;
  const kind = config.compare === "shift" ? "shift" : config.compare === "history" ? "history" : "line";
  const subject = kind !== "line" && config.lines && config.lines.length === 1 ? ctx.names.line(config.lines[0]) : null;
  const adjust = config.adjust === "bonferroni" || config.adjust === "none" ? config.adjust : "bh";
  return generateReading({
    kind,
    subject,
    historyWeeks: config.historyWeeks,
    start: w.start,
    end: w.end,
    testable: w.testable,
    reason: w.reason,
    flagged: w.flagged,
    n: w.n,
    pValue: w.pValue,
    adjustedPValue: w.adjustedPValue,
    adjust,
    alpha: config.alpha,
    minEffect: config.minEffect,
    cramersV: w.cramersVCorrected,
    method: w.method,
    drivers: w.drivers.map((d) => ({
      rowName: ctx.names.row(kind, d.row, config.historyWeeks),
      categoryName: ctx.names.category(d.category),
      observed: d.observed,
      expected: d.expected,
      adjustedResidual: d.adjustedResidual,
      contribution: d.contribution,
    })),
    critical: w.critical ?? 0,
    pooled: w.pooled?.merged.map((m) => ({ label: m.label, members: m.members.map((c) => ctx.names.category(c)) })),
  });
}

/** The brief's data from an episode's context. */
export function briefDataOf(ctx: EpisodeContext, generatedBy: string, generatedAt = new Date()): BriefData {
  const config = ctx.comparison.config;
  const kind = config.compare === "shift" ? "shift" : config.compare === "history" ? "history" : "line";
  const rows: Record<string, string> = {};
  const categories: Record<string, string> = {};
  const codesOfRows = new Set<string>([...(ctx.peak?.rows ?? []), ...ctx.record.drivers.map((d) => d.row)]);
  for (const code of codesOfRows) rows[code] = ctx.names.row(kind, code, config.historyWeeks);
  for (const code of new Set([...(ctx.peak?.columns ?? []), ...ctx.record.drivers.map((d) => d.category)])) categories[code] = ctx.names.category(code);
  for (const c of ctx.diff?.cells ?? []) {
    rows[c.row] ??= ctx.names.row(kind, c.row, config.historyWeeks);
    categories[c.category] ??= ctx.names.category(c.category);
  }
  return {
    record: ctx.record,
    comparison: ctx.comparison,
    live: ctx.live,
    peak: ctx.peak,
    critical: ctx.peak?.critical ?? null,
    timeline: timelineAround(ctx.scan, ctx.live ?? ctx.record, config.windowDays),
    reading: readingOf(ctx, ctx.peak),
    snapshot: ctx.snapshot ? { reason: ctx.snapshot.reason, takenAt: ctx.snapshot.takenAt } : null,
    diff: ctx.diff,
    notes: ctx.notes,
    history: ctx.history,
    names: { rows, categories },
    generatedAt,
    generatedBy,
  };
}
