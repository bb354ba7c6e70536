import { db, writeTransaction } from "./client";
import type { Prisma } from "./generated/client";
import { OPEN_STATUSES, isEpisodeStatus, type EpisodeStatus } from "@/lib/episodes/status";
import type { EpisodeDriver } from "@/lib/monitor/types";
import type { Actor, EpisodeAnalysis } from "@/lib/episodes/types";

/**
 * Data access for flagged-period records (Episode, EpisodeNote, EpisodeSnapshot) and
 * their audit trail. Returns plain typed data; JSON columns are parsed here. The review
 * workflow's rules live in lib/episodes/status.ts, the scan-dependent parts (sync,
 * snapshots) in lib/episodes.
 */

export interface EpisodeRecord {
  id: number;
  comparison: { id: number; code: string; name: string; compare: string; lines: string[] | null };
  start: string;
  end: string;
  peakStart: string;
  peakEnd: string;
  windows: number;
  minAdjustedP: number;
  drivers: EpisodeDriver[];
  status: EpisodeStatus;
  owner: { id: number; name: string } | null;
  actionRefs: string | null;
  firstSeenAt: Date;
  lastSeenAt: Date;
  goneAt: Date | null;
}

export interface EpisodeNoteView {
  id: number;
  body: string;
  createdAt: Date;
  author: { id: number; name: string };
}

export interface EpisodeSnapshotView {
  id: number;
  reason: string;
  status: string;
  takenAt: Date;
  analysis: EpisodeAnalysis;
}

export interface AuditView {
  id: number;
  at: Date;
  actorName: string;
  action: string;
  before: unknown;
  after: unknown;
  reason: string | null;
}

export interface EpisodeFilter {
  status?: EpisodeStatus | "open";
  /** A line code: a driver row, or a comparison limited to that line. */
  line?: string;
  /** A category code: a driver column (or pooled column containing it). */
  category?: string;
  /** Episodes overlapping [from, to] (ISO dates, either may be missing). */
  from?: string;
  to?: string;
  /** Comparison code. */
  comparison?: string;
  /** Include records the latest scan no longer finds (default true). */
  includeGone?: boolean;
}

const episodeInclude = {
  comparison: { select: { id: true, code: true, name: true, compare: true, lines: true } },
  owner: { select: { id: true, displayName: true } },
} satisfies Prisma.EpisodeInclude;

type EpisodeRow = Prisma.EpisodeGetPayload<{ include: typeof episodeInclude }>;

function parseJson<T>(text: string | null, fallback: T): T {
  if (text === null) return fallback;
  try {
    return JSON.parse(text) as T;
  } catch {
    return fallback;
  }
}

function toRecord(row: EpisodeRow): EpisodeRecord {
  return {
    id: row.id,
    comparison: {
      id: row.comparison.id,
      code: row.comparison.code,
      name: row.comparison.name,
      compare: row.comparison.compare,
      lines: parseJson<string[] | null>(row.comparison.lines, null),
    },
    start: row.start,
    end: row.end,
    peakStart: row.peakStart,
    peakEnd: row.peakEnd,
    windows: row.windows,
    minAdjustedP: row.minAdjustedP,
    drivers: parseJson<EpisodeDriver[]>(row.drivers, []),
    status: isEpisodeStatus(row.status) ? row.status : "new",
    owner: row.owner ? { id: row.owner.id, name: row.owner.displayName } : null,
    actionRefs: row.actionRefs,
    firstSeenAt: row.firstSeenAt,
    lastSeenAt: row.lastSeenAt,
    goneAt: row.goneAt,
  };
}

/** Episodes waiting for a decision (new or under investigation): the header's count. */
export async function countOpenEpisodes(): Promise<number> {
  return db().episode.count({ where: { status: { in: [...OPEN_STATUSES] } } });
}

/** Does a driver column label name this category (itself, or a pooled column containing it)? */
export function columnHasCategory(label: string, category: string): boolean {
  if (label === category) return true;
  return label.split(/\s*[+,|]\s*/).includes(category);
}

/** Does this record concern a line: one of its drivers' rows, or a comparison limited to it? */
export function episodeConcernsLine(e: EpisodeRecord, line: string): boolean {
  if (e.comparison.compare === "line" && e.drivers.some((d) => d.row === line)) return true;
  return e.comparison.compare !== "line" && e.comparison.lines !== null && e.comparison.lines.includes(line);
}

/** Records matching the filter, newest first (by start), then by id. */
export async function listEpisodes(filter: EpisodeFilter = {}): Promise<EpisodeRecord[]> {
  const where: Prisma.EpisodeWhereInput = {};
  if (filter.status === "open") where.status = { in: [...OPEN_STATUSES] };
  else if (filter.status) where.status = filter.status;
  if (filter.comparison) where.comparison = { code: filter.comparison };
  if (filter.from) where.end = { gte: filter.from };
  if (filter.to) where.start = { lte: filter.to };
  if (filter.includeGone === false) where.goneAt = null;
  const rows = await db().episode.findMany({
    where,
    include: episodeInclude,
    orderBy: [{ start: "desc" }, { id: "desc" }],
  });
  let records = rows.map(toRecord);
  if (filter.line) records = records.filter((e) => episodeConcernsLine(e, filter.line!));
  if (filter.category) records = records.filter((e) => e.drivers.some((d) => columnHasCategory(d.category, filter.category!)));
  return records;
}

export async function getEpisode(id: number): Promise<EpisodeRecord | null> {
  const row = await db().episode.findUnique({ where: { id }, include: episodeInclude });
  return row ? toRecord(row) : null;
}

export async function episodeNotes(id: number): Promise<EpisodeNoteView[]> {
  const rows = await db().episodeNote.findMany({
    where: { episodeId: id },
    include: { author: { select: { id: true, displayName: true } } },
    orderBy: [{ createdAt: "asc" }, { id: "asc" }],
  });
  return rows.map((n) => ({ id: n.id, body: n.body, createdAt: n.createdAt, author: { id: n.author.id, name: n.author.displayName } }));
}

export async function episodeSnapshots(id: number): Promise<EpisodeSnapshotView[]> {
  const rows = await db().episodeSnapshot.findMany({ where: { episodeId: id }, orderBy: [{ takenAt: "asc" }, { id: "asc" }] });
  return rows.map((s) => ({
    id: s.id,
    reason: s.reason,
    status: s.status,
    takenAt: s.takenAt,
    analysis: JSON.parse(s.analysis) as EpisodeAnalysis,
  }));
}

/** The audit trail of one record, oldest first. */
export async function episodeAudit(id: number): Promise<AuditView[]> {
  const rows = await db().auditEvent.findMany({
    where: { entity: "Episode", entityId: String(id) },
    orderBy: [{ at: "asc" }, { id: "asc" }],
  });
  return rows.map((a) => ({
    id: a.id,
    at: a.at,
    actorName: a.actorName,
    action: a.action,
    before: parseJson<unknown>(a.before, null),
    after: parseJson<unknown>(a.after, null),
    reason: a.reason,
  }));
}

/** People who can own an episode: active engineers and admins. */
export async function episodeOwners(): Promise<{ id: number; name: string }[]> {
  const rows = await db().user.findMany({
    where: { active: true, role: { in: ["engineer", "admin"] } },
    orderBy: { displayName: "asc" },
    select: { id: true, displayName: true },
  });
  return rows.map((u) => ({ id: u.id, name: u.displayName }));
}

/** Comparisons that have (or had) episodes, for the list's filter. */
export async function comparisonsWithEpisodes(): Promise<{ code: string; name: string }[]> {
  return db().comparison.findMany({
    where: { episodes: { some: {} } },
    orderBy: [{ displayOrder: "asc" }, { code: "asc" }],
    select: { code: true, name: true },
  });
}

type Tx = Prisma.TransactionClient;

/** Writes one audit event (inside the caller's transaction when given). */
export async function writeAudit(
  actor: Actor,
  event: { action: string; entity: string; entityId?: string | null; before?: unknown; after?: unknown; reason?: string | null },
  tx: Tx = db(),
): Promise<void> {
  await tx.auditEvent.create({
    data: {
      actorId: actor.id,
      actorName: actor.name,
      action: event.action,
      entity: event.entity,
      entityId: event.entityId ?? null,
      before: event.before === undefined ? null : JSON.stringify(event.before),
      after: event.after === undefined ? null : JSON.stringify(event.after),
      reason: event.reason ?? null,
    },
  });
}

export class EpisodeError extends Error {
  readonly code: "not-found" | "transition" | "reason" | "owner" | "invalid";
  constructor(code: EpisodeError["code"], message: string) {
    super(message);
    this.name = "EpisodeError";
    this.code = code;
  }
}

/** Assigns (or clears) the owner. Audited. Returns false when nothing changed. */
export async function setEpisodeOwner(id: number, ownerId: number | null, actor: Actor): Promise<boolean> {
  return writeTransaction(async (tx) => {
    const e = await tx.episode.findUnique({ where: { id }, include: { owner: { select: { displayName: true } } } });
    if (!e) throw new EpisodeError("not-found", "No such flagged period.");
    if (e.ownerId === ownerId) return false;
    let ownerName: string | null = null;
    if (ownerId !== null) {
      const user = await tx.user.findUnique({ where: { id: ownerId } });
      if (!user || !user.active || !["engineer", "admin"].includes(user.role)) {
        throw new EpisodeError("owner", "The owner must be an active engineer or admin.");
      }
      ownerName = user.displayName;
    }
    await tx.episode.update({ where: { id }, data: { ownerId } });
    await writeAudit(
      actor,
      {
        action: "episode.owner",
        entity: "Episode",
        entityId: String(id),
        before: { ownerId: e.ownerId, owner: e.owner?.displayName ?? null },
        after: { ownerId, owner: ownerName },
      },
      tx,
    );
    return true;
  });
}

/** Sets the plant's own containment / corrective-action references (free text). Audited. */
export async function setEpisodeActionRefs(id: number, actionRefs: string | null, actor: Actor): Promise<boolean> {
  const value = actionRefs && actionRefs.trim() !== "" ? actionRefs.trim() : null;
  return writeTransaction(async (tx) => {
    const e = await tx.episode.findUnique({ where: { id } });
    if (!e) throw new EpisodeError("not-found", "No such flagged period.");
    if (e.actionRefs === value) return false;
    await tx.episode.update({ where: { id }, data: { actionRefs: value } });
    await writeAudit(
      actor,
      { action: "episode.action-refs", entity: "Episode", entityId: String(id), before: { actionRefs: e.actionRefs }, after: { actionRefs: value } },
      tx,
    );
    return true;
  });
}

/** Adds a note by a user. Audited. */
export async function addEpisodeNote(id: number, body: string, actor: Actor & { id: number }): Promise<EpisodeNoteView> {
  const text = body.trim();
  if (text === "") throw new EpisodeError("invalid", "A note needs some text.");
  return writeTransaction(async (tx) => {
    const e = await tx.episode.findUnique({ where: { id } });
    if (!e) throw new EpisodeError("not-found", "No such flagged period.");
    const note = await tx.episodeNote.create({
      data: { episodeId: id, authorId: actor.id, body: text },
      include: { author: { select: { id: true, displayName: true } } },
    });
    await writeAudit(actor, { action: "episode.note", entity: "Episode", entityId: String(id), after: { noteId: note.id, body: text } }, tx);
    return { id: note.id, body: note.body, createdAt: note.createdAt, author: { id: note.author.id, name: note.author.displayName } };
  });
}

/** Records who exported which episodes in which format: one record (entity Episode) or a list (entity Episodes). */
export async function auditExport(
  actor: Actor,
  what: { format: string; episodeIds: number[]; list: boolean; filter?: unknown; via: string },
): Promise<void> {
  await writeAudit(actor, {
    action: `export.episodes.${what.format}`,
    entity: what.list ? "Episodes" : "Episode",
    entityId: what.list ? null : String(what.episodeIds[0]),
    after: { format: what.format, episodeIds: what.episodeIds, filter: what.filter ?? null, via: what.via },
  });
}
