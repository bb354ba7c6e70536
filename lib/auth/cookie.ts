import { cookies, headers } from "next/headers";
import { SESSION_COOKIE } from "./constants";
import { clientIp, isHttps } from "./origin";

/** Sets the session cookie: httpOnly, SameSite=Lax, Secure on HTTPS, path /, until the absolute expiry. */
export async function setSessionCookie(token: string, expiresAt: Date): Promise<void> {
  const secure = isHttps(await headers());
  (await cookies()).set(SESSION_COOKIE, token, { httpOnly: true, sameSite: "lax", secure, path: "/", expires: expiresAt });
}

export async function readSessionCookie(): Promise<string | undefined> {
  return (await cookies()).get(SESSION_COOKIE)?.value;
}

export async function clearSessionCookie(): Promise<void> {
  (await cookies()).delete(SESSION_COOKIE);
}

export async function requestIp(): Promise<string> {
  return clientIp(await headers());
}
