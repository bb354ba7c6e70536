import { verifyApiToken, type TokenPrincipal } from "./api-tokens";
import { cookieFromHeader, isSameOrigin, type HeaderSource } from "./origin";
import { roleAtLeast, SCOPE_ROLE, type ApiScope, type Role } from "./roles";
import { SESSION_COOKIE, validateSessionToken, type UserPrincipal } from "./sessions";

/**
 * The access rules as plain functions of (token, headers, clock), so integration tests
 * call them without Next. lib/auth/guard.ts wraps them with next/headers.
 */

export type Principal = UserPrincipal | TokenPrincipal;

export class AuthError extends Error {
  readonly status: 401 | 403;
  constructor(status: 401 | 403, message?: string) {
    super(message ?? (status === 401 ? "Sign in to continue." : "Your role does not allow this."));
    this.name = "AuthError";
    this.status = status;
  }
}

export type Decision =
  | { ok: true }
  | { ok: false; status: 401; reason: "no-session" }
  | { ok: false; status: 403; reason: "role" | "badge" };

/** May this user (or nobody) do something that needs `min`? Badge sessions pass only when floor is true. */
export function decide(user: UserPrincipal | null, min: Role, floor = false): Decision {
  if (!user) return { ok: false, status: 401, reason: "no-session" };
  if (user.sessionKind === "badge" && !floor) return { ok: false, status: 403, reason: "badge" };
  if (!roleAtLeast(user.role, min)) return { ok: false, status: 403, reason: "role" };
  return { ok: true };
}

function strip(user: UserPrincipal & { sessionId?: number }): UserPrincipal {
  const { kind, userId, username, displayName, role, sessionKind } = user;
  return { kind, userId, username, displayName, role, sessionKind };
}

/** Server-action rule: same origin, a live session, role ≥ min. Throws AuthError. */
export async function checkActionUser(
  token: string | null | undefined,
  headers: HeaderSource,
  min: Role,
  options: { floor?: boolean } = {},
  now = new Date(),
): Promise<UserPrincipal> {
  if (!isSameOrigin(headers)) throw new AuthError(403, "Cross-site request refused.");
  const user = await validateSessionToken(token, now);
  const decision = decide(user, min, options.floor ?? false);
  if (!decision.ok) {
    throw new AuthError(
      decision.status,
      decision.reason === "badge" ? "A badge sign-in is for floor entry only; sign in with your password." : undefined,
    );
  }
  return strip(user!);
}

function json(status: 401 | 403, error: string): Response {
  const headers: Record<string, string> = { "cache-control": "no-store" };
  if (status === 401) headers["www-authenticate"] = 'Bearer realm="linemix"';
  return Response.json({ error }, { status, headers });
}

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Route-handler rule: a Bearer token with the scope, or a session cookie whose role fits
 * the scope (tallies:write → operator, badge ok; analysis:read → engineer). Cookie-
 * authenticated non-GET requests must come from this site. Returns the principal or a
 * JSON 401/403 Response.
 */
export async function authenticateRequest(request: Request, scope: ApiScope, now = new Date()): Promise<Principal | Response> {
  const authorization = request.headers.get("authorization");
  if (authorization !== null) {
    const match = /^Bearer\s+(\S+)$/i.exec(authorization.trim());
    if (!match) return json(401, "Use 'Authorization: Bearer <token>'.");
    const check = await verifyApiToken(match[1], scope, now);
    return check.ok ? check.principal : json(check.status, check.error);
  }
  const token = cookieFromHeader(request.headers.get("cookie"), SESSION_COOKIE);
  if (!token) return json(401, "Sign in or send an API token.");
  if (!SAFE_METHODS.has(request.method.toUpperCase()) && !isSameOrigin(request.headers)) {
    return json(403, "Cross-site request refused.");
  }
  const user = await validateSessionToken(token, now);
  const rule = SCOPE_ROLE[scope];
  const decision = decide(user, rule.min, rule.floor);
  if (!decision.ok) {
    return decision.status === 401 ? json(401, "Your session has ended; sign in again.") : json(403, "Your role does not allow this.");
  }
  return strip(user!);
}
