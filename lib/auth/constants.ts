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
