import { randomBytes, scrypt as scryptCallback, timingSafeEqual, type ScryptOptions } from "node:crypto";

/**
 * Password and PIN hashing with scrypt from node:crypto, at the parameters of the OWASP
 * Password Storage Cheat Sheet (N=2^17, r=8, p=1), a 16-byte random salt and a 64-byte key.
 *
 * Stored as a PHC-like string of our own:
 *   $scrypt$ln=17,r=8,p=1$<salt, base64 without padding>$<key, base64 without padding>
 * where ln is log2(N). The parameters travel with the hash, so they can be raised later
 * and old hashes still verify (needsRehash tells when to re-hash at the next sign-in).
 */

export const SCRYPT_PARAMS = { ln: 17, r: 8, p: 1, keyLength: 64, saltLength: 16 } as const;

/** scrypt needs 128·N·r·p bytes; Node's default maxmem (32 MiB) is too small for N=2^17, r=8. */
function maxmemFor(N: number, r: number, p: number): number {
  return 128 * N * r * p + 32 * 1024 * 1024;
}

function scrypt(password: string, salt: Buffer, keyLength: number, options: ScryptOptions): Promise<Buffer> {
  return new Promise((resolve, reject) =>
    scryptCallback(password.normalize("NFKC"), salt, keyLength, options, (error, key) =>
      error ? reject(error) : resolve(key),
    ),
  );
}

const b64 = (bytes: Buffer) => bytes.toString("base64").replace(/=+$/, "");

export async function hashPassword(password: string): Promise<string> {
  const { ln, r, p, keyLength, saltLength } = SCRYPT_PARAMS;
  const N = 2 ** ln;
  const salt = randomBytes(saltLength);
  const key = await scrypt(password, salt, keyLength, { N, r, p, maxmem: maxmemFor(N, r, p) });
  return `$scrypt$ln=${ln},r=${r},p=${p}$${b64(salt)}$${b64(key)}`;
}

type Parsed = { ln: number; r: number; p: number; salt: Buffer; key: Buffer };

export function parseHash(stored: string): Parsed | null {
  const match = /^\$scrypt\$ln=(\d{1,2}),r=(\d{1,2}),p=(\d{1,2})\$([A-Za-z0-9+/]+)\$([A-Za-z0-9+/]+)$/.exec(stored);
  if (!match) return null;
  const [ln, r, p] = [Number(match[1]), Number(match[2]), Number(match[3])];
  if (ln < 10 || ln > 22 || r < 1 || r > 32 || p < 1 || p > 16) return null;
  const salt = Buffer.from(match[4], "base64");
  const key = Buffer.from(match[5], "base64");
  if (salt.length < 16 || key.length < 32) return null;
  return { ln, r, p, salt, key };
}

/** Constant-time comparison of the derived key; false for a malformed or missing hash. */
export async function verifyPassword(password: string, stored: string | null | undefined): Promise<boolean> {
  const parsed = stored ? parseHash(stored) : null;
  if (!parsed) {
    // Spend the same time as a real check, so a missing account is not told apart by timing.
    await hashPassword(password);
    return false;
  }
  const N = 2 ** parsed.ln;
  const key = await scrypt(password, parsed.salt, parsed.key.length, {
    N,
    r: parsed.r,
    p: parsed.p,
    maxmem: maxmemFor(N, parsed.r, parsed.p),
  });
  return key.length === parsed.key.length && timingSafeEqual(key, parsed.key);
}

/** True when a stored hash uses weaker parameters than today's. */
export function needsRehash(stored: string): boolean {
  const parsed = parseHash(stored);
  if (!parsed) return true;
  return (
    parsed.ln < SCRYPT_PARAMS.ln ||
    parsed.r < SCRYPT_PARAMS.r ||
    parsed.key.length < SCRYPT_PARAMS.keyLength ||
    parsed.salt.length < SCRYPT_PARAMS.saltLength
  );
}

/** Password policy: length is what matters (OWASP / NIST 800-63B): 12 to 200 characters. */
export function passwordProblem(password: string): string | null {
  if (password.length < 12) return "A password needs at least 12 characters.";
  if (password.length > 200) return "A password can have at most 200 characters.";
  return null;
}

/** A PIN is 4 to 8 digits. */
export function pinProblem(pin: string): string | null {
  return /^\d{4,8}$/.test(pin) ? null : "A PIN is 4 to 8 digits.";
}
