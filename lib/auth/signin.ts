import { db } from "@/lib/db/client";
import { recordAudit } from "./audit";
import { hashPassword, needsRehash, verifyPassword } from "./password";
import { isRole, type Role } from "./roles";
import { createSession, pruneSessions } from "./sessions";
import {
  badgeSignInBlockedFor,
  clearPasswordFailures,
  passwordSignInBlockedFor,
  recordBadgeFailure,
  recordPasswordFailure,
} from "./throttle";

/**
 * Sign-in by name and password, and the quick floor sign-in by badge and PIN. Plain
 * functions (the server actions in app/signin/actions.ts set the cookie).
 */

export const WRONG_PASSWORD = "That name and password do not match an active account.";
export const WRONG_PIN = "That badge and PIN do not match an active badge.";
export const PIN_ATTEMPTS = 5;
export const PIN_LOCK_MINUTES = 15;

export type SignInResult =
  | { ok: true; token: string; expiresAt: Date; role: Role; userId: number; kind: "password" | "badge" }
  | { ok: false; error: string };

const minutes = (ms: number) => Math.max(1, Math.ceil(ms / 60_000));
const tooMany = (ms: number) => `Too many failed sign-ins. Try again in ${minutes(ms)} minute${minutes(ms) === 1 ? "" : "s"}.`;

export function normaliseUsername(name: string): string {
  return name.trim().toLowerCase();
}

export async function passwordSignIn(input: { username: string; password: string; ip: string }, now = new Date()): Promise<SignInResult> {
  const username = normaliseUsername(input.username);
  const wait = await passwordSignInBlockedFor(username, input.ip);
  if (wait > 0) return { ok: false, error: tooMany(wait) };

  const user = await db().user.findUnique({ where: { username } });
  // verifyPassword spends the same time on a missing hash, so unknown names are not told apart.
  const matches = await verifyPassword(input.password, user?.passwordHash);
  if (!user || !matches || !user.active || !isRole(user.role)) {
    await recordPasswordFailure(username, input.ip);
    await recordAudit(
      { id: user?.id ?? null, name: username.slice(0, 60) || "(empty)" },
      { action: "auth.signin-failed", entity: "user", entityId: user?.id ?? null, after: { ip: input.ip } },
    );
    return { ok: false, error: WRONG_PASSWORD };
  }
  await clearPasswordFailures(username, input.ip);
  if (user.passwordHash && needsRehash(user.passwordHash)) {
    await db().user.update({ where: { id: user.id }, data: { passwordHash: await hashPassword(input.password) } });
  }
  await pruneSessions(now); // housekeeping: sessions that ended more than a day ago
  const session = await createSession(user.id, "password", now);
  await recordAudit(
    { id: user.id, name: user.username },
    { action: "auth.signin", entity: "session", entityId: session.sessionId, after: { kind: "password", ip: input.ip } },
  );
  return { ok: true, token: session.token, expiresAt: session.expiresAt, role: user.role, userId: user.id, kind: "password" };
}

export async function badgeSignIn(input: { badge: string; pin: string; ip: string }, now = new Date()): Promise<SignInResult> {
  const wait = await badgeSignInBlockedFor(input.ip);
  if (wait > 0) return { ok: false, error: tooMany(wait) };

  const badge = input.badge.trim();
  const user = badge ? await db().user.findUnique({ where: { badgeNumber: badge } }) : null;
  if (user?.pinLockedUntil && user.pinLockedUntil.getTime() > now.getTime()) {
    const left = user.pinLockedUntil.getTime() - now.getTime();
    return { ok: false, error: `This badge is locked after too many wrong PINs. Try again in ${minutes(left)} minutes, or sign in with your password.` };
  }
  const matches = await verifyPassword(input.pin, user?.pinHash);
  if (!user || !matches || !user.active || !isRole(user.role)) {
    await recordBadgeFailure(input.ip);
    if (user && user.pinHash && !matches) {
      const failed = user.failedPins + 1;
      const lock = failed >= PIN_ATTEMPTS;
      await db().user.update({
        where: { id: user.id },
        data: lock
          ? { failedPins: 0, pinLockedUntil: new Date(now.getTime() + PIN_LOCK_MINUTES * 60_000) }
          : { failedPins: failed },
      });
      if (lock) {
        await recordAudit(
          { id: user.id, name: user.username },
          { action: "auth.badge-locked", entity: "user", entityId: user.id, after: { minutes: PIN_LOCK_MINUTES, ip: input.ip } },
        );
      }
      if (lock) return { ok: false, error: `Five wrong PINs: this badge is locked for ${PIN_LOCK_MINUTES} minutes.` };
    }
    return { ok: false, error: WRONG_PIN };
  }
  await db().user.update({ where: { id: user.id }, data: { failedPins: 0, pinLockedUntil: null } });
  await pruneSessions(now);
  const session = await createSession(user.id, "badge", now);
  await recordAudit(
    { id: user.id, name: user.username },
    { action: "auth.signin", entity: "session", entityId: session.sessionId, after: { kind: "badge", ip: input.ip } },
  );
  return { ok: true, token: session.token, expiresAt: session.expiresAt, role: user.role, userId: user.id, kind: "badge" };
}
