import { createHash, randomBytes } from "node:crypto";

/** 256 random bits, base64url: session cookies and API token bodies. */
export function randomToken(): string {
  return randomBytes(32).toString("base64url");
}

/** SHA-256 (hex) of a token: the only form in which tokens are stored. */
export function sha256(value: string): string {
  return createHash("sha256").update(value, "utf8").digest("hex");
}
