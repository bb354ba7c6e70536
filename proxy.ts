import { NextResponse, type NextRequest } from "next/server";
import { NONCE_HEADER, PATH_HEADER, SESSION_COOKIE, acceptsBearerToken, hasBearerToken, isPublicPath } from "@/lib/auth/constants";
import { STATIC_SECURITY_HEADERS, contentSecurityPolicy, newNonce } from "@/lib/http/security-headers";

/**
 * Runs before every request (Next 16 "proxy", formerly middleware):
 *  - a page request without a session cookie is sent to /signin?next=<path>. This is a
 *    presence check only, to save a render: the real check (token, expiry, role) is in
 *    the guards of lib/auth/guard.ts, which every page, action and route handler calls;
 *  - a per-request CSP nonce and the security headers.
 * API routes are not redirected: their handlers answer 401/403 as JSON. Nor is a request
 * with a bearer token to a download that checks tokens itself (TOKEN_ROUTE_PATTERNS in
 * lib/auth/constants.ts), so a script with an API token can fetch a flagged period's export.
 */
export function proxy(request: NextRequest) {
  const { pathname, search } = request.nextUrl;
  const https = request.headers.get("x-forwarded-proto")?.split(",")[0]?.trim() === "https" || process.env.LINEMIX_SECURE_COOKIES === "1";
  const nonce = newNonce();
  const csp = contentSecurityPolicy(nonce, { dev: process.env.NODE_ENV === "development", https });

  const isApi = pathname === "/api" || pathname.startsWith("/api/");
  const isRead = request.method === "GET" || request.method === "HEAD";
  const tokenRoute = hasBearerToken(request.headers.get("authorization")) && acceptsBearerToken(pathname);
  let response: NextResponse;
  if (!isApi && isRead && !tokenRoute && !isPublicPath(pathname) && !request.cookies.has(SESSION_COOKIE)) {
    const target = new URL("/signin", request.url);
    if (pathname !== "/") target.searchParams.set("next", pathname + search);
    response = NextResponse.redirect(target, 307);
  } else {
    const requestHeaders = new Headers(request.headers);
    requestHeaders.set(NONCE_HEADER, nonce);
    requestHeaders.set("Content-Security-Policy", csp);
    requestHeaders.set(PATH_HEADER, pathname + search);
    response = NextResponse.next({ request: { headers: requestHeaders } });
  }
  response.headers.set("Content-Security-Policy", csp);
  for (const [name, value] of Object.entries(STATIC_SECURITY_HEADERS)) response.headers.set(name, value);
  if (https) response.headers.set("Strict-Transport-Security", "max-age=31536000");
  return response;
}

export const config = {
  matcher: ["/((?!_next/static|_next/image|favicon.ico|robots.txt).*)"],
};
