import { db, writeTransaction } from "@/lib/db/client";
import { recordAudit, type Actor } from "./audit";
import { hashPassword, passwordProblem, pinProblem } from "./password";
import { isRole, type Role } from "./roles";
import { revokeUserSessions } from "./sessions";
import { normaliseUsername } from "./signin";

/**
 * Account administration, shared by the admin pages and `npm run user`. Each change is
 * one transaction with its AuditEvent. Failures come back as { ok: false, error }.
 */

export type UserResult = { ok: true; userId: number; message: string } | { ok: false; error: string };

export const USERNAME_PATTERN = /^[a-z0-9][a-z0-9._-]{1,39}$/;
export const BADGE_PATTERN = /^[A-Za-z0-9-]{2,20}$/;

function publicView(u: { username: string; displayName: string; role: string; active: boolean; badgeNumber: string | null }) {
  return { username: u.username, displayName: u.displayName, role: u.role, active: u.active, badgeNumber: u.badgeNumber };
}

async function activeAdminsOtherThan(userId: number): Promise<number> {
  return db().user.count({ where: { role: "admin", active: true, id: { not: userId } } });
}

export async function createUser(
  actor: Actor,
  input: { username: string; displayName?: string; role: Role; password: string },
): Promise<UserResult> {
  const username = normaliseUsername(input.username);
  if (!USERNAME_PATTERN.test(username)) return { ok: false, error: "A user name is 2-40 letters, digits, '.', '_' or '-', starting with a letter or digit." };
  if (!isRole(input.role)) return { ok: false, error: "Unknown role." };
  const problem = passwordProblem(input.password);
  if (problem) return { ok: false, error: problem };
  if (await db().user.findUnique({ where: { username } })) return { ok: false, error: `The user name "${username}" is taken.` };
  const passwordHash = await hashPassword(input.password);
  const displayName = input.displayName?.trim() || username;
  const user = await writeTransaction(async (tx) => {
    const created = await tx.user.create({ data: { username, displayName, role: input.role, passwordHash } });
    await recordAudit(actor, { action: "user.create", entity: "user", entityId: created.id, after: publicView(created) }, tx);
    return created;
  });
  return { ok: true, userId: user.id, message: `Created ${user.username} (${user.role}).` };
}

/** Changes the role and ends every session of the user, so the new role applies at the next sign-in. */
export async function setRole(actor: Actor, userId: number, role: Role, reason?: string): Promise<UserResult> {
  if (!isRole(role)) return { ok: false, error: "Unknown role." };
  const user = await db().user.findUnique({ where: { id: userId } });
  if (!user) return { ok: false, error: "No such user." };
  if (user.role === role) return { ok: true, userId, message: `${user.username} is already ${role}.` };
  if (user.role === "admin" && user.active && (await activeAdminsOtherThan(userId)) === 0) {
    return { ok: false, error: "This is the last active admin; make another admin first." };
  }
  const now = new Date();
  await writeTransaction(async (tx) => {
    await tx.user.update({ where: { id: userId }, data: { role } });
    await tx.session.updateMany({ where: { userId, revokedAt: null }, data: { revokedAt: now } });
    await recordAudit(actor, { action: "user.role", entity: "user", entityId: userId, before: { role: user.role }, after: { role }, reason }, tx);
  });
  return { ok: true, userId, message: `${user.username} is now ${role}; their sessions were ended.` };
}

export async function setActive(actor: Actor, userId: number, active: boolean, reason?: string): Promise<UserResult> {
  const user = await db().user.findUnique({ where: { id: userId } });
  if (!user) return { ok: false, error: "No such user." };
  if (!active && actor.id === userId) return { ok: false, error: "You cannot deactivate your own account." };
  if (!active && user.role === "admin" && user.active && (await activeAdminsOtherThan(userId)) === 0) {
    return { ok: false, error: "This is the last active admin; make another admin first." };
  }
  const now = new Date();
  await writeTransaction(async (tx) => {
    await tx.user.update({ where: { id: userId }, data: { active } });
    if (!active) await tx.session.updateMany({ where: { userId, revokedAt: null }, data: { revokedAt: now } });
    await recordAudit(
      actor,
      { action: active ? "user.activate" : "user.deactivate", entity: "user", entityId: userId, before: { active: user.active }, after: { active }, reason },
      tx,
    );
  });
  return { ok: true, userId, message: active ? `${user.username} is active again.` : `${user.username} is deactivated; their sessions were ended.` };
}

export async function resetPassword(actor: Actor, userId: number, password: string): Promise<UserResult> {
  const problem = passwordProblem(password);
  if (problem) return { ok: false, error: problem };
  const user = await db().user.findUnique({ where: { id: userId } });
  if (!user) return { ok: false, error: "No such user." };
  const passwordHash = await hashPassword(password);
  const now = new Date();
  await writeTransaction(async (tx) => {
    await tx.user.update({ where: { id: userId }, data: { passwordHash } });
    await tx.session.updateMany({ where: { userId, revokedAt: null }, data: { revokedAt: now } });
    await recordAudit(actor, { action: "user.password", entity: "user", entityId: userId }, tx);
  });
  return { ok: true, userId, message: `New password set for ${user.username}; their sessions were ended.` };
}

/** Sets (or, with badge null, removes) the badge number and PIN; clears any PIN lock. */
export async function setBadge(actor: Actor, userId: number, badge: string | null, pin: string | null): Promise<UserResult> {
  const user = await db().user.findUnique({ where: { id: userId } });
  if (!user) return { ok: false, error: "No such user." };
  let pinHash: string | null = null;
  let badgeNumber: string | null = null;
  if (badge !== null) {
    badgeNumber = badge.trim();
    if (!BADGE_PATTERN.test(badgeNumber)) return { ok: false, error: "A badge number is 2-20 letters, digits or '-'." };
    const problem = pinProblem(pin ?? "");
    if (problem) return { ok: false, error: problem };
    const holder = await db().user.findUnique({ where: { badgeNumber } });
    if (holder && holder.id !== userId) return { ok: false, error: `Badge ${badgeNumber} belongs to another user.` };
    pinHash = await hashPassword(pin!);
  }
  const now = new Date();
  await writeTransaction(async (tx) => {
    await tx.user.update({ where: { id: userId }, data: { badgeNumber, pinHash, failedPins: 0, pinLockedUntil: null } });
    await tx.session.updateMany({ where: { userId, kind: "badge", revokedAt: null }, data: { revokedAt: now } });
    await recordAudit(
      actor,
      { action: badgeNumber ? "user.badge" : "user.badge-remove", entity: "user", entityId: userId, before: { badgeNumber: user.badgeNumber }, after: { badgeNumber } },
      tx,
    );
  });
  return { ok: true, userId, message: badgeNumber ? `Badge ${badgeNumber} and a new PIN set for ${user.username}.` : `Badge removed from ${user.username}.` };
}

export async function findUserByName(username: string) {
  return db().user.findUnique({ where: { username: normaliseUsername(username) } });
}

export { revokeUserSessions };
