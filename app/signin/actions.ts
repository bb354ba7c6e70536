"use server";

import { headers } from "next/headers";
import { redirect } from "next/navigation";
import { z } from "zod";
import { clearSessionCookie, readSessionCookie, requestIp, setSessionCookie } from "@/lib/auth/cookie";
import { safeNext } from "@/lib/auth/next-path";
import { isSameOrigin } from "@/lib/auth/origin";
import { revokeSessionToken, validateSessionToken } from "@/lib/auth/sessions";
import { badgeSignIn, passwordSignIn, type SignInResult } from "@/lib/auth/signin";
import { recordAudit } from "@/lib/auth/audit";
import { actionOutcome } from "@/lib/http/action-result";

export type SignInState = { ok: false; error: string; username?: string; badge?: string } | { ok: true };

const passwordForm = z.object({
  username: z.string().trim().min(1, "Enter your user name.").max(60),
  password: z.string().min(1, "Enter your password.").max(200),
  next: z.string().max(1000).optional(),
});

const badgeForm = z.object({
  badge: z.string().trim().min(1, "Scan or type your badge number.").max(20),
  pin: z.string().min(1, "Enter your PIN.").max(8, "A PIN is 4 to 8 digits."),
  next: z.string().max(1000).optional(),
});

function destination(result: Extract<SignInResult, { ok: true }>, next: string | undefined): string {
  const wanted = safeNext(next, "");
  if (result.kind === "badge") return wanted.startsWith("/entry") ? wanted : "/entry";
  if (wanted) return wanted;
  return result.role === "operator" ? "/entry" : "/";
}

async function refuseCrossSite(): Promise<SignInState | null> {
  return isSameOrigin(await headers()) ? null : { ok: false, error: "Cross-site sign-in refused." };
}

export async function signInWithPassword(_prev: SignInState, form: FormData): Promise<SignInState> {
  // A full, read-only or busy database (sessions and audit are writes) comes back as the form's plain message.
  return actionOutcome("sign-in: password", async (): Promise<SignInState> => {
    const refused = await refuseCrossSite();
    if (refused) return refused;
    const parsed = passwordForm.safeParse({
      username: form.get("username") ?? "",
      password: form.get("password") ?? "",
      next: form.get("next") ?? undefined,
    });
    if (!parsed.success) return { ok: false, error: parsed.error.issues[0]?.message ?? "Check the form.", username: String(form.get("username") ?? "") };
    const result = await passwordSignIn({ username: parsed.data.username, password: parsed.data.password, ip: await requestIp() });
    if (!result.ok) return { ok: false, error: result.error, username: parsed.data.username };
    await replaceSession(result.token, result.expiresAt);
    redirect(destination(result, parsed.data.next));
  });
}

export async function signInWithBadge(_prev: SignInState, form: FormData): Promise<SignInState> {
  // A full, read-only or busy database (sessions and audit are writes) comes back as the form's plain message.
  return actionOutcome("sign-in: badge", async (): Promise<SignInState> => {
    const refused = await refuseCrossSite();
    if (refused) return refused;
    const parsed = badgeForm.safeParse({ badge: form.get("badge") ?? "", pin: form.get("pin") ?? "", next: form.get("next") ?? undefined });
    if (!parsed.success) return { ok: false, error: parsed.error.issues[0]?.message ?? "Check the form.", badge: String(form.get("badge") ?? "") };
    const result = await badgeSignIn({ badge: parsed.data.badge, pin: parsed.data.pin, ip: await requestIp() });
    if (!result.ok) return { ok: false, error: result.error, badge: parsed.data.badge };
    await replaceSession(result.token, result.expiresAt);
    redirect(destination(result, parsed.data.next));
  });
}

/** A new session on every sign-in: the one this browser had before is revoked. */
async function replaceSession(token: string, expiresAt: Date): Promise<void> {
  const previous = await readSessionCookie();
  if (previous) await revokeSessionToken(previous);
  await setSessionCookie(token, expiresAt);
}

export async function signOut(): Promise<void> {
  const token = await readSessionCookie();
  if (token && isSameOrigin(await headers())) {
    const user = await validateSessionToken(token);
    await revokeSessionToken(token);
    if (user) await recordAudit({ id: user.userId, name: user.username }, { action: "auth.signout", entity: "session", entityId: user.sessionId });
  }
  await clearSessionCookie();
  redirect("/signin");
}
