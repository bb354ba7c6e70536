import type Database from "better-sqlite3";
import { createHash } from "node:crypto";
import { rawDb } from "../db/client";
import { withRawWrite } from "../db/write-lock";
import type { Actor } from "./actor";
import { sqliteTime, writeAudit } from "./audit";
import type { FieldProblem } from "./schemas";

/**
 * Idempotent writes. Every write from the floor sheet, the JSON API and the corrections
 * page runs under a client-chosen idempotency key, in one IMMEDIATE transaction on the
 * raw connection (which takes SQLite's write lock at BEGIN, so two connections cannot
 * both pass the check), after the process-wide write lock (lib/db/write-lock.ts), so it
 * waits for an open Prisma write transaction on the event loop instead of failing with
 * SQLITE_BUSY after a 5 s stall of the whole thread:
 *   1. a Submission with this key exists → same content: the original result (replay);
 *      different content: conflict;
 *   2. otherwise the caller's plan is built (codes resolved, permissions and sheet state
 *      checked) and stored with the Submission row.
 * Entry keys are derived from the submission key (sub:<key>:<n>), so the original result
 * is re-read from the entries themselves on a replay. Should a unique-constraint race on
 * Submission.idempotencyKey still happen, it is answered as a replay.
 */

export type SubmissionKind = "tallies" | "inspections" | "floor-sheet" | "correction";

export type NewTally = {
  date: string;
  shiftId: number;
  lineId: number;
  categoryId: number;
  productId: number | null;
  count: number;
  note: string | null;
  source: "floor" | "api" | "correction";
  supersedes?: { id: number; count: number } | null;
  reason?: string | null;
};

export type NewUnits = {
  date: string;
  shiftId: number;
  lineId: number;
  productId: number | null;
  units: number;
  source: "floor" | "api" | "correction";
  supersedes?: { id: number; units: number } | null;
  reason?: string | null;
};

export type Plan = { tallies: NewTally[]; units: NewUnits[] };

export type Refusal =
  | { status: "invalid"; problems: FieldProblem[] }
  | { status: "forbidden"; message: string }
  | { status: "stale"; message: string };

export type SubmissionResult = {
  submissionId: number;
  idempotencyKey: string;
  kind: SubmissionKind;
  receivedAt: string;
  stored: { tallies: number; inspections: number; corrections: number };
  tallyEntryIds: number[];
  inspectionIds: number[];
  /** Sum of the stored rows' values (a correction's new value counts). */
  totals: { defects: number; units: number };
};

export type SubmitOutcome =
  | { status: "created"; result: SubmissionResult }
  | { status: "replay"; result: SubmissionResult }
  | { status: "conflict"; message: string; submissionId: number }
  | Refusal;

/** JSON with sorted keys and without null/undefined members: equal content, equal text. */
export function canonicalJson(value: unknown): string {
  if (value === null || value === undefined) return "null";
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(",")}]`;
  if (typeof value === "object") {
    const entries = Object.entries(value as Record<string, unknown>)
      .filter(([, v]) => v !== null && v !== undefined)
      .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(",")}}`;
  }
  return JSON.stringify(value);
}

export function contentHash(kind: SubmissionKind, content: unknown): string {
  return createHash("sha256").update(`${kind}\n${canonicalJson(content)}`).digest("hex");
}

function keyRange(key: string): [string, string] {
  return [`sub:${key}:`, `sub:${key};`];
}

type SubmissionRow = { id: number; idempotencyKey: string; contentHash: string; source: string; createdAt: string };

function findSubmission(sqlite: Database.Database, key: string): SubmissionRow | undefined {
  return sqlite.prepare("SELECT id, idempotencyKey, contentHash, source, createdAt FROM Submission WHERE idempotencyKey = ?").get(key) as
    | SubmissionRow
    | undefined;
}

/** The result of a stored submission, rebuilt from its entries (so a replay answers exactly the same). */
export function resultFor(sqlite: Database.Database, submission: SubmissionRow): SubmissionResult {
  const [lo, hi] = keyRange(submission.idempotencyKey);
  const tallies = sqlite
    .prepare("SELECT id, count, supersedesId FROM TallyEntry WHERE idempotencyKey >= ? AND idempotencyKey < ? ORDER BY id")
    .all(lo, hi) as { id: number; count: number; supersedesId: number | null }[];
  const units = sqlite
    .prepare("SELECT id, units, supersedesId FROM InspectionCount WHERE idempotencyKey >= ? AND idempotencyKey < ? ORDER BY id")
    .all(lo, hi) as { id: number; units: number; supersedesId: number | null }[];
  return {
    submissionId: submission.id,
    idempotencyKey: submission.idempotencyKey,
    kind: submission.source as SubmissionKind,
    receivedAt: sqliteTime(submission.createdAt).toISOString(),
    stored: {
      tallies: tallies.length,
      inspections: units.length,
      corrections: tallies.filter((t) => t.supersedesId !== null).length + units.filter((u) => u.supersedesId !== null).length,
    },
    tallyEntryIds: tallies.map((t) => t.id),
    inspectionIds: units.map((u) => u.id),
    totals: { defects: tallies.reduce((s, t) => s + t.count, 0), units: units.reduce((s, u) => s + u.units, 0) },
  };
}

function answerExisting(sqlite: Database.Database, existing: SubmissionRow, hash: string): SubmitOutcome {
  if (existing.contentHash === hash) return { status: "replay", result: resultFor(sqlite, existing) };
  return {
    status: "conflict",
    submissionId: existing.id,
    message: "This idempotency key was already used for different content. Use a new key for a new batch.",
  };
}

function isSubmissionKeyRace(error: unknown): boolean {
  const e = error as { code?: string; message?: string };
  return e?.code === "SQLITE_CONSTRAINT_UNIQUE" && /Submission/.test(e.message ?? "");
}

class Refused extends Error {
  constructor(readonly refusal: Refusal) {
    super(refusal.status);
  }
}

/**
 * Stores a plan under an idempotency key exactly once. `build` runs inside the write
 * transaction (so it sees the state it will change) and returns the plan or a refusal.
 * Async only for the write lock: the transaction itself is one synchronous call.
 */
export async function submitOnce(input: {
  key: string;
  kind: SubmissionKind;
  content: unknown;
  actor: Actor;
  build: (sqlite: Database.Database) => Plan | Refusal;
  sqlite?: Database.Database;
  now?: Date;
}): Promise<SubmitOutcome> {
  const sqlite = input.sqlite ?? rawDb();
  const hash = contentHash(input.kind, input.content);
  const now = input.now ?? new Date();
  const stamp = now.toISOString();
  const run = sqlite.transaction((): SubmitOutcome => {
    const existing = findSubmission(sqlite, input.key);
    if (existing) return answerExisting(sqlite, existing, hash);
    const plan = input.build(sqlite);
    if ("status" in plan) throw new Refused(plan);
    const rows = plan.tallies.length + plan.units.length;
    sqlite
      .prepare("INSERT INTO Submission (idempotencyKey, contentHash, source, rows, userId, createdAt) VALUES (?, ?, ?, ?, ?, ?)")
      .run(input.key, hash, input.kind, rows, input.actor.userId, stamp);
    const [prefix] = keyRange(input.key);
    const insertTally = sqlite.prepare(
      `INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, productId, count, source, note, enteredById, enteredByName, createdAt, idempotencyKey, supersedesId, correctionReason)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    );
    const insertUnits = sqlite.prepare(
      `INSERT INTO InspectionCount (productionDate, shiftId, lineId, productId, units, source, enteredById, enteredByName, createdAt, idempotencyKey, supersedesId, correctionReason)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    );
    let n = 0;
    for (const t of plan.tallies) {
      const id = Number(
        insertTally.run(
          t.date, t.shiftId, t.lineId, t.categoryId, t.productId, t.count, t.source, t.note, input.actor.userId, input.actor.name, stamp,
          `${prefix}${n++}`, t.supersedes?.id ?? null, t.reason ?? null,
        ).lastInsertRowid,
      );
      if (t.supersedes) {
        writeAudit(
          sqlite,
          input.actor,
          {
            action: "tally.correct",
            entity: "TallyEntry",
            entityId: id,
            before: { entryId: t.supersedes.id, count: t.supersedes.count },
            after: { entryId: id, count: t.count, date: t.date, shiftId: t.shiftId, lineId: t.lineId, categoryId: t.categoryId },
            reason: t.reason ?? null,
          },
          now,
        );
      }
    }
    for (const u of plan.units) {
      const id = Number(
        insertUnits.run(
          u.date, u.shiftId, u.lineId, u.productId, u.units, u.source, input.actor.userId, input.actor.name, stamp,
          `${prefix}${n++}`, u.supersedes?.id ?? null, u.reason ?? null,
        ).lastInsertRowid,
      );
      if (u.supersedes) {
        writeAudit(
          sqlite,
          input.actor,
          {
            action: "units.correct",
            entity: "InspectionCount",
            entityId: id,
            before: { entryId: u.supersedes.id, units: u.supersedes.units },
            after: { entryId: id, units: u.units, date: u.date, shiftId: u.shiftId, lineId: u.lineId },
            reason: u.reason ?? null,
          },
          now,
        );
      }
    }
    // The answer is rebuilt from what was stored, exactly as a replay will rebuild it.
    return { status: "created", result: resultFor(sqlite, findSubmission(sqlite, input.key)!) };
  });
  try {
    return await withRawWrite(() => run.immediate());
  } catch (error) {
    if (error instanceof Refused) return error.refusal;
    if (isSubmissionKeyRace(error)) {
      const existing = findSubmission(sqlite, input.key);
      if (existing) return answerExisting(sqlite, existing, hash);
    }
    throw error;
  }
}
