/** Shared by proxy.ts (no database imports there) and the session code. */
export const SESSION_COOKIE = "linemix_session";
/** Request header set by proxy.ts with the requested path and query (for ?next= after sign-in). */
export const PATH_HEADER = "x-linemix-path";
/** Request header set by proxy.ts with the CSP nonce of this request. */
export const NONCE_HEADER = "x-nonce";
/** Paths anyone may open without a session. */
export const PUBLIC_PATHS = ["/signin", "/forbidden", "/api/health"] as const;

export function isPublicPath(pathname: string): boolean {
  return PUBLIC_PATHS.some((p) => pathname === p || pathname.startsWith(p + "/"));
}

/**
 * Route handlers outside /api that a script may call with `Authorization: Bearer <token>`
 * instead of a session: the flagged-period downloads. Each of them authenticates the
 * token and its scope itself (lib/episodes/download.ts → authenticateApi, analysis:read);
 * proxy.ts only stops redirecting such requests to /signin. A path belongs here only when
 * its handler does that check (test/auth/download-tokens.test.ts checks the list).
 */
export const TOKEN_ROUTE_PATTERNS: readonly RegExp[] = [/^\/episodes\/[^/]+\/export\/[^/]+$/, /^\/episodes\/export\/[^/]+$/];

/** Does this path lead to a route handler that checks a bearer token itself? */
export function acceptsBearerToken(pathname: string): boolean {
  return TOKEN_ROUTE_PATTERNS.some((p) => p.test(pathname));
}

/** Does the request carry a bearer token (not checked here: the route handler does)? */
export function hasBearerToken(authorization: string | null): boolean {
  return authorization !== null && /^Bearer\s+\S+$/i.test(authorization.trim());
}
