import type { AuditView, EpisodeNoteView, EpisodeRecord } from "@/lib/db/episodes";
import type { Reading } from "@/lib/review/reading";
import type { SnapshotDiff } from "./snapshot-diff";
import type { ComparisonInfo, WindowAnalysis } from "./types";

/** One window of the timeline around an episode. */
export interface TimelinePoint {
  start: string;
  end: string;
  testable: boolean;
  flagged: boolean;
  pValue: number | null;
  adjustedPValue: number | null;
}

export interface StatusStep {
  at: Date;
  actor: string;
  from: string;
  to: string;
  reason: string | null;
}

/** Everything the PDF brief prints, gathered once (see lib/episodes/brief.ts). */
export interface BriefData {
  record: EpisodeRecord;
  comparison: ComparisonInfo;
  /** The live episode that continues the record, or null when the scan no longer finds it. */
  live: { start: string; end: string; windows: number } | null;
  /** Live analysis of the record's peak window. */
  peak: WindowAnalysis | null;
  /** Critical |adjusted residual| for the peak table (Bonferroni over its cells). */
  critical: number | null;
  timeline: TimelinePoint[];
  reading: Reading | null;
  /** The snapshot compared with the live result, and the difference. */
  snapshot: { reason: string; takenAt: Date } | null;
  diff: SnapshotDiff | null;
  notes: EpisodeNoteView[];
  history: StatusStep[];
  /** Display names of row and category codes. */
  names: { rows: Record<string, string>; categories: Record<string, string> };
  generatedAt: Date;
  generatedBy: string;
}

/** Status changes from an episode's audit trail. */
export function statusSteps(audit: readonly AuditView[]): StatusStep[] {
  return audit
    .filter((a) => a.action === "episode.status")
    .map((a) => ({
      at: a.at,
      actor: a.actorName,
      from: String((a.before as { status?: string } | null)?.status ?? ""),
      to: String((a.after as { status?: string } | null)?.status ?? ""),
      reason: a.reason,
    }));
}

/** The standing cautions printed with every brief. */
export const BRIEF_CAUTIONS = [
  "A statistical signal is a reason to investigate, not proof of a cause: it says where to look, not why.",
  "Very large samples make small, unimportant differences significant: read the effect size (bias-corrected Cramér's V) and the observed/expected ratios, not the p-value alone.",
  "The mix test says nothing about the defect rate: a line can make more defects of every kind and keep the same mix.",
  "Product disposition follows the plant's quality system, customer requirements and local regulations, not this brief.",
];
