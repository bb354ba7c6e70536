/**
 * Same-origin check for state-changing requests authenticated by cookie. SameSite=Lax
 * already keeps the cookie off most cross-site POSTs; this is the second line: the
 * Origin header (sent by browsers on every POST) must name this host.
 */
export type HeaderSource = { get(name: string): string | null };

/** The host the client addressed: X-Forwarded-Host (first) when a proxy set it, else Host. */
export function requestHost(headers: HeaderSource): string | null {
  const forwarded = headers.get("x-forwarded-host")?.split(",")[0]?.trim();
  return forwarded || headers.get("host")?.trim() || null;
}

/** True when the request comes from a page of this site. A missing Origin is refused unless Sec-Fetch-Site says same-origin. */
export function isSameOrigin(headers: HeaderSource): boolean {
  const host = requestHost(headers);
  const origin = headers.get("origin");
  if (origin && origin !== "null") {
    try {
      return host !== null && new URL(origin).host.toLowerCase() === host.toLowerCase();
    } catch {
      return false;
    }
  }
  return headers.get("sec-fetch-site") === "same-origin";
}

/** The client's address for throttling: first X-Forwarded-For hop, else X-Real-IP, else "unknown". */
export function clientIp(headers: HeaderSource): string {
  const forwarded = headers.get("x-forwarded-for")?.split(",")[0]?.trim();
  return forwarded || headers.get("x-real-ip")?.trim() || "unknown";
}

/** HTTPS as seen by the client: X-Forwarded-Proto, or LINEMIX_SECURE_COOKIES=1 to force Secure cookies. */
export function isHttps(headers: HeaderSource): boolean {
  if (process.env.LINEMIX_SECURE_COOKIES === "1") return true;
  return headers.get("x-forwarded-proto")?.split(",")[0]?.trim() === "https";
}

/** Reads one cookie from a Cookie header (for route handlers given a plain Request). */
export function cookieFromHeader(cookieHeader: string | null, name: string): string | null {
  if (!cookieHeader) return null;
  for (const part of cookieHeader.split(";")) {
    const eq = part.indexOf("=");
    if (eq < 0) continue;
    if (part.slice(0, eq).trim() === name) {
      try {
        return decodeURIComponent(part.slice(eq + 1).trim());
      } catch {
        return null;
      }
    }
  }
  return null;
}
