"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import type { Actor } from "@/lib/auth/audit";
import { requireActionUser } from "@/lib/auth/guard";
import { ROLES } from "@/lib/auth/roles";
import { createUser, resetPassword, setActive, setBadge, setRole, type UserResult } from "@/lib/auth/users";
import { actionOutcome, validationFailure, type ActionResult } from "@/lib/http/action-result";

type Result = ActionResult<{ secret?: string }>;

/**
 * Every action here: admin only, checked on the server, whatever the page showed; a
 * full, read-only or busy database comes back as the form's message (actionOutcome).
 */
async function asAdmin(run: (actor: Actor) => Promise<Result>): Promise<Result> {
  return actionOutcome("admin: users", async () => {
    const me = await requireActionUser("admin");
    const result = await run({ id: me.userId, name: me.username });
    if (result.ok) revalidatePath("/admin/users", "layout");
    return result;
  });
}

const toResult = (r: UserResult): Result => (r.ok ? { ok: true, message: r.message } : { ok: false, status: 400, error: r.error });

const id = z.coerce.number().int().positive();

const createSchema = z.object({
  username: z.string().trim().min(2, "A user name has at least 2 characters.").max(40),
  displayName: z.string().trim().max(80).optional(),
  role: z.enum(ROLES),
  password: z.string().min(12, "A password needs at least 12 characters.").max(200),
});

export async function createUserAction(_prev: Result, form: FormData): Promise<Result> {
  return asAdmin(async (actor) => {
    const parsed = createSchema.safeParse(Object.fromEntries(form));
    if (!parsed.success) return validationFailure(parsed.error);
    return toResult(await createUser(actor, parsed.data));
  });
}

const roleSchema = z.object({ userId: id, role: z.enum(ROLES), reason: z.string().trim().max(200).optional() });

export async function changeRoleAction(_prev: Result, form: FormData): Promise<Result> {
  return asAdmin(async (actor) => {
    const parsed = roleSchema.safeParse(Object.fromEntries(form));
    if (!parsed.success) return validationFailure(parsed.error);
    return toResult(await setRole(actor, parsed.data.userId, parsed.data.role, parsed.data.reason || undefined));
  });
}

const activeSchema = z.object({ userId: id, active: z.enum(["true", "false"]), reason: z.string().trim().max(200).optional() });

export async function setActiveAction(_prev: Result, form: FormData): Promise<Result> {
  return asAdmin(async (actor) => {
    const parsed = activeSchema.safeParse(Object.fromEntries(form));
    if (!parsed.success) return validationFailure(parsed.error);
    return toResult(await setActive(actor, parsed.data.userId, parsed.data.active === "true", parsed.data.reason || undefined));
  });
}

const badgeSchema = z.object({
  userId: id,
  badge: z.string().trim().max(20),
  pin: z.string().max(8).optional(),
});

export async function setBadgeAction(_prev: Result, form: FormData): Promise<Result> {
  return asAdmin(async (actor) => {
    const parsed = badgeSchema.safeParse(Object.fromEntries(form));
    if (!parsed.success) return validationFailure(parsed.error);
    const { userId, badge, pin } = parsed.data;
    return toResult(await setBadge(actor, userId, badge === "" ? null : badge, badge === "" ? null : (pin ?? "")));
  });
}

const passwordSchema = z.object({ userId: id, password: z.string().min(12, "A password needs at least 12 characters.").max(200) });

export async function resetPasswordAction(_prev: Result, form: FormData): Promise<Result> {
  return asAdmin(async (actor) => {
    const parsed = passwordSchema.safeParse(Object.fromEntries(form));
    if (!parsed.success) return validationFailure(parsed.error);
    return toResult(await resetPassword(actor, parsed.data.userId, parsed.data.password));
  });
}
