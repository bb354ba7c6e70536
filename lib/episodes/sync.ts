import { db, writeTransaction } from "@/lib/db/client";
import { writeAudit } from "@/lib/db/episodes";
import type { Episode as ScannedEpisode, ScanResult } from "@/lib/monitor/types";
import { analysisOf, type EpisodeSource } from "./source";
import type { Actor, ComparisonInfo, EpisodeAnalysis } from "./types";

/**
 * Keeps the episode records of a comparison in step with its latest scan.
 *
 * - A scanned episode matches an existing record of the same comparison when their date
 *   ranges overlap: an episode grows (or shrinks) as windows flag or stop flagging, and
 *   stays the same record. Records still found are preferred over ones gone, then the
 *   oldest record; one record matches at most one scanned episode.
 * - A scanned episode that matches nothing becomes a new record (status "new") with a
 *   "raised" snapshot of the peak window's full analysis.
 * - A record the scan no longer finds gets goneAt (never deleted: its status, notes and
 *   snapshots stay, and it comes back if a later scan finds it again).
 */

export const SCAN_ACTOR: Actor = { id: null, name: "scan" };

export interface SyncSummary {
  comparison: string;
  created: number[];
  /** Records whose range, windows or drivers changed. */
  updated: number[];
  gone: number[];
  revived: number[];
  unchanged: number[];
}

interface RecordRow {
  id: number;
  start: string;
  end: string;
  peakStart: string;
  peakEnd: string;
  windows: number;
  minAdjustedP: number;
  drivers: string;
  lastSeenAt: Date;
  goneAt: Date | null;
}

/** An unchanged record's lastSeenAt is refreshed at most this often, so page views are not writes. */
export const LAST_SEEN_REFRESH_MS = 10 * 60_000;

// One sync at a time in this process: two page loads must not both create a record.
let queue: Promise<unknown> = Promise.resolve();
function serialized<T>(task: () => Promise<T>): Promise<T> {
  const run = queue.then(task, task);
  queue = run.catch(() => undefined);
  return run;
}

function overlaps(a: { start: string; end: string }, b: { start: string; end: string }): boolean {
  return a.start <= b.end && a.end >= b.start;
}

/** Pairs each scanned episode with the record it continues, or null for a new one. */
export function matchEpisodes(scanned: readonly ScannedEpisode[], records: readonly RecordRow[]): (RecordRow | null)[] {
  const taken = new Set<number>();
  const ordered = [...records].sort((a, b) => Number(a.goneAt !== null) - Number(b.goneAt !== null) || a.id - b.id);
  return scanned.map((episode) => {
    const match = ordered.find((r) => !taken.has(r.id) && overlaps(r, episode)) ?? null;
    if (match) taken.add(match.id);
    return match;
  });
}

function fields(e: ScannedEpisode) {
  return {
    start: e.start,
    end: e.end,
    peakStart: e.peak.start,
    peakEnd: e.peak.end,
    windows: e.windows,
    minAdjustedP: e.peak.adjustedPValue ?? 1,
    drivers: JSON.stringify(e.drivers),
  };
}

function sameFields(r: RecordRow, f: ReturnType<typeof fields>): boolean {
  return (
    r.start === f.start &&
    r.end === f.end &&
    r.peakStart === f.peakStart &&
    r.peakEnd === f.peakEnd &&
    r.windows === f.windows &&
    r.minAdjustedP === f.minAdjustedP &&
    r.drivers === f.drivers
  );
}

/** Syncs one comparison's records with a scan result already in hand. */
export function syncEpisodes(
  source: EpisodeSource,
  comparison: ComparisonInfo,
  scan: ScanResult,
  now = new Date(),
): Promise<SyncSummary> {
  return serialized(() => syncNow(source, comparison, scan, now));
}

async function syncNow(source: EpisodeSource, comparison: ComparisonInfo, scan: ScanResult, now: Date): Promise<SyncSummary> {
  const summary: SyncSummary = { comparison: comparison.code, created: [], updated: [], gone: [], revived: [], unchanged: [] };
  const records: RecordRow[] = await db().episode.findMany({
    where: { comparisonId: comparison.id },
    select: {
      id: true,
      start: true,
      end: true,
      peakStart: true,
      peakEnd: true,
      windows: true,
      minAdjustedP: true,
      drivers: true,
      lastSeenAt: true,
      goneAt: true,
    },
  });
  const scanned = [...scan.episodes].sort((a, b) => (a.start < b.start ? -1 : a.start > b.start ? 1 : 0));
  const matches = matchEpisodes(scanned, records);
  // The snapshots of new records are computed before the transaction (they call the scan service).
  const analyses = new Map<number, EpisodeAnalysis>();
  for (let i = 0; i < scanned.length; i++) {
    if (!matches[i]) analyses.set(i, await analysisOf(source, comparison, scanned[i]));
  }
  await writeTransaction(async (tx) => {
    const matched = new Set<number>();
    for (let i = 0; i < scanned.length; i++) {
      const episode = scanned[i];
      const f = fields(episode);
      const record = matches[i];
      if (!record) {
        const created = await tx.episode.create({
          data: { comparisonId: comparison.id, ...f, status: "new", firstSeenAt: now, lastSeenAt: now },
        });
        await tx.episodeSnapshot.create({
          data: { episodeId: created.id, reason: "raised", status: "new", takenAt: now, analysis: JSON.stringify(analyses.get(i)) },
        });
        await writeAudit(
          SCAN_ACTOR,
          { action: "episode.raise", entity: "Episode", entityId: String(created.id), after: { comparison: comparison.code, ...rangeOf(f) } },
          tx,
        );
        summary.created.push(created.id);
        continue;
      }
      matched.add(record.id);
      const changed = !sameFields(record, f);
      const stale = now.getTime() - record.lastSeenAt.getTime() >= LAST_SEEN_REFRESH_MS;
      if (changed || record.goneAt || stale) {
        await tx.episode.update({ where: { id: record.id }, data: { ...f, lastSeenAt: now, goneAt: null } });
      }
      if (record.goneAt) {
        summary.revived.push(record.id);
        await writeAudit(
          SCAN_ACTOR,
          { action: "episode.revive", entity: "Episode", entityId: String(record.id), before: rangeOf(record), after: rangeOf(f) },
          tx,
        );
      } else if (changed) {
        summary.updated.push(record.id);
        if (record.start !== f.start || record.end !== f.end || record.windows !== f.windows) {
          await writeAudit(
            SCAN_ACTOR,
            { action: "episode.range", entity: "Episode", entityId: String(record.id), before: rangeOf(record), after: rangeOf(f) },
            tx,
          );
        }
      } else summary.unchanged.push(record.id);
    }
    for (const record of records) {
      if (matched.has(record.id) || record.goneAt) continue;
      await tx.episode.update({ where: { id: record.id }, data: { goneAt: now } });
      await writeAudit(SCAN_ACTOR, { action: "episode.gone", entity: "Episode", entityId: String(record.id), before: rangeOf(record) }, tx);
      summary.gone.push(record.id);
    }
  });
  return summary;
}

function rangeOf(r: { start: string; end: string; windows: number }) {
  return { start: r.start, end: r.end, windows: r.windows };
}

/** Scans one comparison and syncs its records. */
export async function syncComparison(source: EpisodeSource, idOrCode: number | string, now = new Date()): Promise<SyncSummary> {
  const comparison = await source.comparison(idOrCode);
  if (!comparison) throw new RangeError(`No saved comparison ${idOrCode}.`);
  return syncEpisodes(source, comparison, await source.scan(comparison), now);
}

/** Scans every active comparison and syncs their records. */
export async function syncAllComparisons(source: EpisodeSource, now = new Date()): Promise<SyncSummary[]> {
  const out: SyncSummary[] = [];
  for (const comparison of await source.comparisons()) {
    out.push(await syncEpisodes(source, comparison, await source.scan(comparison), now));
  }
  return out;
}
