import { RateLimiterMemory, RateLimiterRes } from "rate-limiter-flexible";

/**
 * Sign-in throttling against password guessing, in process memory (one Linemix server
 * per plant). Only failures count; a success clears the name+address counter.
 *  - per name and address: 5 failures in 15 minutes, then blocked for the rest of the window;
 *  - per address overall: 30 failures in 15 minutes (many names tried from one PC);
 *  - per name overall: 20 failures in 15 minutes, whatever the address (the address
 *    comes from X-Forwarded-For, which a client can forge when no reverse proxy sets it);
 *  - badge sign-in per address: 30 failures in 15 minutes (badge numbers tried in turn);
 *    each badge itself locks after 5 wrong PINs in the database (User.pinLockedUntil).
 */

const WINDOW_SECONDS = 15 * 60;

type Limiters = { nameIp: RateLimiterMemory; ip: RateLimiterMemory; name: RateLimiterMemory; badgeIp: RateLimiterMemory };
const globalForThrottle = globalThis as unknown as { linemixThrottle?: Limiters };

function make(): Limiters {
  return {
    nameIp: new RateLimiterMemory({ keyPrefix: "signin-name-ip", points: 5, duration: WINDOW_SECONDS }),
    ip: new RateLimiterMemory({ keyPrefix: "signin-ip", points: 30, duration: WINDOW_SECONDS }),
    name: new RateLimiterMemory({ keyPrefix: "signin-name", points: 20, duration: WINDOW_SECONDS }),
    badgeIp: new RateLimiterMemory({ keyPrefix: "badge-ip", points: 30, duration: WINDOW_SECONDS }),
  };
}

function limiters(): Limiters {
  globalForThrottle.linemixThrottle ??= make();
  return globalForThrottle.linemixThrottle;
}

/** Forgets all counters (tests). */
export function resetThrottles(): void {
  globalForThrottle.linemixThrottle = make();
}

async function blockedFor(limiter: RateLimiterMemory, key: string): Promise<number> {
  const res = await limiter.get(key);
  if (res && res.consumedPoints >= limiter.points) return res.msBeforeNext;
  return 0;
}

async function count(limiter: RateLimiterMemory, key: string): Promise<void> {
  try {
    await limiter.consume(key);
  } catch (error) {
    if (!(error instanceof RateLimiterRes)) throw error; // over the limit: already blocked
  }
}

const nameIpKey = (name: string, ip: string) => `${name.trim().toLowerCase()}|${ip}`;

/** Milliseconds until a password sign-in for this name from this address may be tried again (0 = now). */
export async function passwordSignInBlockedFor(name: string, ip: string): Promise<number> {
  const l = limiters();
  const key = name.trim().toLowerCase();
  return Math.max(await blockedFor(l.nameIp, nameIpKey(name, ip)), await blockedFor(l.ip, ip), await blockedFor(l.name, key));
}

export async function recordPasswordFailure(name: string, ip: string): Promise<void> {
  const l = limiters();
  await Promise.all([count(l.nameIp, nameIpKey(name, ip)), count(l.ip, ip), count(l.name, name.trim().toLowerCase())]);
}

export async function clearPasswordFailures(name: string, ip: string): Promise<void> {
  await limiters().nameIp.delete(nameIpKey(name, ip));
}

export async function badgeSignInBlockedFor(ip: string): Promise<number> {
  return blockedFor(limiters().badgeIp, ip);
}

export async function recordBadgeFailure(ip: string): Promise<void> {
  await count(limiters().badgeIp, ip);
}
