import type Database from "better-sqlite3";
import type { Actor } from "./actor";

export type AuditInput = {
  action: string;
  entity: string;
  entityId?: string | number | null;
  before?: unknown;
  after?: unknown;
  reason?: string | null;
};

/** Writes one AuditEvent on the raw connection (inside the caller's transaction). */
export function writeAudit(sqlite: Database.Database, actor: Actor, event: AuditInput, at = new Date()): void {
  sqlite
    .prepare(
      `INSERT INTO AuditEvent (at, actorId, actorName, action, entity, entityId, before, after, reason)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)`,
    )
    .run(
      at.toISOString(),
      actor.userId,
      actor.name,
      event.action,
      event.entity,
      event.entityId === undefined || event.entityId === null ? null : String(event.entityId),
      event.before === undefined ? null : JSON.stringify(event.before),
      event.after === undefined ? null : JSON.stringify(event.after),
      event.reason ?? null,
    );
}

/** SQLite text timestamps come as ISO ("…T…Z" / "+00:00") or "YYYY-MM-DD HH:MM:SS" (UTC); both to Date. */
export function sqliteTime(value: string | number | Date): Date {
  if (value instanceof Date) return value;
  if (typeof value === "number") return new Date(value);
  return new Date(value.includes("T") ? value : `${value.replace(" ", "T")}Z`);
}
