import { cookies, headers } from "next/headers";
import { redirect } from "next/navigation";
import { cache } from "react";
import { AuthError, authenticateRequest, checkActionUser, decide, type Principal } from "./access";
import type { TokenPrincipal } from "./api-tokens";
import type { Role } from "./roles";
import { PATH_HEADER, SESSION_COOKIE } from "./constants";
import { validateSessionToken, type UserPrincipal } from "./sessions";
import { safeNext } from "./next-path";

/**
 * The guards every page, server action and route handler calls. The rules live in
 * lib/auth/access.ts (plain, tested); this file only reads Next's cookies and headers.
 *
 *   pages:          const me = await requirePageUser("engineer");
 *   floor pages:    const me = await requirePageUser("operator", { floor: true });
 *   server actions: try { me = await requireActionUser("engineer") } catch (e) { if (e instanceof AuthError) return {...} throw e }
 *   route handlers: const p = await authenticateApi(request, "analysis:read"); if (p instanceof Response) return p;
 */

export type { Role } from "./roles";
export type { UserPrincipal } from "./sessions";
export type { TokenPrincipal } from "./api-tokens";
export type { Principal } from "./access";
export { AuthError } from "./access";


const sessionFromCookie = cache(async (): Promise<UserPrincipal | null> => {
  const token = (await cookies()).get(SESSION_COOKIE)?.value;
  const user = await validateSessionToken(token);
  if (!user) return null;
  const { sessionId: _omit, ...principal } = user;
  return principal;
});

/** The signed-in user of this request, or null (for the header and optional personalisation). */
export async function currentUser(): Promise<UserPrincipal | null> {
  return sessionFromCookie();
}

/**
 * Server components: without a session, redirect to /signin?next=<path>; with a role too
 * low (or a badge session on a non-floor page), redirect to /forbidden.
 */
export async function requirePageUser(min: Role, options: { floor?: boolean; path?: string } = {}): Promise<UserPrincipal> {
  const user = await sessionFromCookie();
  const decision = decide(user, min, options.floor ?? false);
  if (decision.ok) return user!;
  if (decision.status === 401) {
    const path = options.path ?? (await headers()).get(PATH_HEADER) ?? "/";
    redirect(`/signin?next=${encodeURIComponent(safeNext(path))}`);
  }
  redirect(`/forbidden?need=${min}${decision.reason === "badge" ? "&badge=1" : ""}`);
}

/** Server actions: throws AuthError(401/403); also refuses a cross-site post (Origin ≠ Host). */
export async function requireActionUser(min: Role, options: { floor?: boolean } = {}): Promise<UserPrincipal> {
  const token = (await cookies()).get(SESSION_COOKIE)?.value;
  return checkActionUser(token, await headers(), min, options);
}

/** Route handlers: the principal, or a JSON 401/403 Response to return as is. */
export async function authenticateApi(request: Request, scope: "tallies:write" | "analysis:read"): Promise<Principal | Response> {
  return authenticateRequest(request, scope);
}

export function isTokenPrincipal(p: Principal): p is TokenPrincipal {
  return p.kind === "token";
}

