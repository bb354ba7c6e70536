import { db } from "@/lib/db/client";
import { ignoreDatabaseTrouble } from "@/lib/db/errors";
import { isRole, type Role } from "./roles";
import { randomToken, sha256 } from "./tokens-crypto";

/**
 * Database sessions. The cookie carries a random 256-bit token; the database keeps only
 * its SHA-256 (Session.tokenHash), so a copy of the database does not yield live cookies.
 * These functions take the token and the clock as arguments (no next/headers), so they
 * are tested directly; lib/auth/guard.ts is the thin glue to Next's cookies().
 */

export { SESSION_COOKIE } from "./constants";
export type SessionKind = "password" | "badge";

export type UserPrincipal = {
  kind: "user";
  userId: number;
  username: string;
  displayName: string;
  role: Role;
  sessionKind: SessionKind;
};

const MINUTE = 60_000;

function minutesFromEnv(name: string, fallback: number): number {
  const value = Number(process.env[name]);
  return Number.isFinite(value) && value > 0 ? value : fallback;
}

/** Idle and absolute lifetimes (ms). Badge sessions on shared floor PCs end after a short idle time. */
export function sessionPolicy(kind: SessionKind): { idleMs: number; absoluteMs: number } {
  if (kind === "badge") {
    return {
      idleMs: minutesFromEnv("LINEMIX_BADGE_IDLE_MINUTES", 15) * MINUTE,
      absoluteMs: 12 * 60 * MINUTE, // at most one long shift
    };
  }
  return {
    idleMs: minutesFromEnv("LINEMIX_SESSION_IDLE_MINUTES", 8 * 60) * MINUTE,
    absoluteMs: 7 * 24 * 60 * MINUTE,
  };
}

/** lastSeenAt is written at most this often, so every request is not a write. */
export const TOUCH_INTERVAL_MS = MINUTE;

/** Starts a new session (always a new token: never reuse one from before sign-in). */
export async function createSession(
  userId: number,
  kind: SessionKind,
  now = new Date(),
): Promise<{ token: string; expiresAt: Date; sessionId: number }> {
  const token = randomToken();
  const expiresAt = new Date(now.getTime() + sessionPolicy(kind).absoluteMs);
  const session = await db().session.create({
    data: { tokenHash: sha256(token), userId, kind, createdAt: now, lastSeenAt: now, expiresAt },
  });
  return { token, expiresAt, sessionId: session.id };
}

/**
 * The user behind a session token, or null when the token is unknown, revoked, past its
 * absolute expiry, idle too long, or the user is inactive or has an unknown role.
 * Touches lastSeenAt at most once a minute.
 */
export async function validateSessionToken(
  token: string | null | undefined,
  now = new Date(),
): Promise<(UserPrincipal & { sessionId: number }) | null> {
  if (!token || token.length > 200) return null;
  const session = await db().session.findUnique({ where: { tokenHash: sha256(token) }, include: { user: true } });
  if (!session || session.revokedAt) return null;
  const kind: SessionKind = session.kind === "badge" ? "badge" : "password";
  const { idleMs } = sessionPolicy(kind);
  const t = now.getTime();
  if (session.expiresAt.getTime() <= t) return null;
  if (session.lastSeenAt.getTime() + idleMs <= t) return null;
  const user = session.user;
  if (!user.active || !isRole(user.role)) return null;
  if (t - session.lastSeenAt.getTime() >= TOUCH_INTERVAL_MS) {
    // Best effort: a full, read-only or busy database must not turn every page view
    // into an error; the touch is retried on the next request.
    await db()
      .session.update({ where: { id: session.id }, data: { lastSeenAt: now } })
      .catch(ignoreDatabaseTrouble);
  }
  return {
    kind: "user",
    userId: user.id,
    username: user.username,
    displayName: user.displayName,
    role: user.role,
    sessionKind: kind,
    sessionId: session.id,
  };
}

/** Sign-out: revokes the session of this token (no-op for an unknown token). */
export async function revokeSessionToken(token: string | null | undefined, now = new Date()): Promise<void> {
  if (!token) return;
  await db().session.updateMany({ where: { tokenHash: sha256(token), revokedAt: null }, data: { revokedAt: now } });
}

/** Revokes every live session of a user (role change, deactivation, password reset). Returns how many. */
export async function revokeUserSessions(userId: number, now = new Date()): Promise<number> {
  const result = await db().session.updateMany({ where: { userId, revokedAt: null }, data: { revokedAt: now } });
  return result.count;
}

/** Housekeeping: deletes sessions that ended more than a day ago. */
export async function pruneSessions(now = new Date()): Promise<number> {
  const dayAgo = new Date(now.getTime() - 24 * 60 * MINUTE);
  const result = await db().session.deleteMany({
    where: { OR: [{ expiresAt: { lt: dayAgo } }, { revokedAt: { lt: dayAgo } }] },
  });
  return result.count;
}
