import { writeTransaction } from "@/lib/db/client";
import { EpisodeError, getEpisode, writeAudit, type EpisodeRecord } from "@/lib/db/episodes";
import { analysisOf, overlappingEpisode, type EpisodeSource } from "./source";
import { STATUS_LABELS, canTransition, reasonRequired, type EpisodeStatus } from "./status";
import type { Actor, EpisodeAnalysis } from "./types";

/**
 * Status changes of a flagged period. Each change is checked against the workflow,
 * carries a reason where one is required, takes a snapshot of the analysis as it stands
 * at that moment ("status:<new status>") and writes an audit event.
 */

/** The analysis as it stands now for a record: the live episode that continues it, else its stored range. */
export async function currentAnalysis(source: EpisodeSource, record: EpisodeRecord): Promise<EpisodeAnalysis> {
  const comparison = await source.comparison(record.comparison.id);
  if (!comparison) throw new EpisodeError("not-found", "The comparison of this flagged period no longer exists.");
  const scan = await source.scan(comparison);
  const live = overlappingEpisode(scan, record);
  if (live) return analysisOf(source, comparison, live);
  return {
    version: 1,
    comparison: { id: comparison.id, code: comparison.code, name: comparison.name, compare: comparison.compare },
    config: comparison.config,
    episode: {
      start: record.start,
      end: record.end,
      windows: record.windows,
      peakStart: record.peakStart,
      peakEnd: record.peakEnd,
      minAdjustedP: record.minAdjustedP,
      drivers: record.drivers,
    },
    peak: await source.window(comparison, record.peakStart),
  };
}

export interface StatusChange {
  from: EpisodeStatus;
  to: EpisodeStatus;
  snapshotId: number;
  /** Set when taking the episode into investigation assigned the actor as owner. */
  ownerAssigned: boolean;
}

export async function changeEpisodeStatus(
  source: EpisodeSource,
  id: number,
  to: EpisodeStatus,
  reason: string | null,
  actor: Actor,
  now = new Date(),
): Promise<StatusChange> {
  const record = await getEpisode(id);
  if (!record) throw new EpisodeError("not-found", "No such flagged period.");
  const from = record.status;
  if (!canTransition(from, to)) {
    throw new EpisodeError("transition", `A flagged period cannot go from “${STATUS_LABELS[from]}” to “${STATUS_LABELS[to]}”.`);
  }
  const why = reason?.trim() ? reason.trim() : null;
  if (reasonRequired(from, to) && !why) {
    throw new EpisodeError("reason", `Say why it is “${STATUS_LABELS[to]}”.`);
  }
  const analysis = await currentAnalysis(source, record);
  const assignOwner = to === "investigating" && record.owner === null && actor.id !== null;
  return writeTransaction(async (tx) => {
    // Only if nobody changed the status in the meantime.
    const updated = await tx.episode.updateMany({
      where: { id, status: from },
      data: { status: to, ...(assignOwner ? { ownerId: actor.id } : {}) },
    });
    if (updated.count !== 1) throw new EpisodeError("transition", "Someone else changed this flagged period's status; reload and try again.");
    const snapshot = await tx.episodeSnapshot.create({
      data: { episodeId: id, reason: `status:${to}`, status: to, takenAt: now, analysis: JSON.stringify(analysis) },
    });
    await writeAudit(
      actor,
      {
        action: "episode.status",
        entity: "Episode",
        entityId: String(id),
        before: { status: from },
        after: { status: to, snapshotId: snapshot.id },
        reason: why,
      },
      tx,
    );
    if (assignOwner) {
      await writeAudit(
        actor,
        {
          action: "episode.owner",
          entity: "Episode",
          entityId: String(id),
          before: { ownerId: null, owner: null },
          after: { ownerId: actor.id, owner: actor.name },
          reason: "took it into investigation",
        },
        tx,
      );
    }
    return { from, to, snapshotId: snapshot.id, ownerAssigned: assignOwner };
  });
}

