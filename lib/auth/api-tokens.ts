import { db, writeTransaction } from "@/lib/db/client";
import { ignoreDatabaseTrouble } from "@/lib/db/errors";
import { API_SCOPES, isApiScope, type ApiScope } from "./roles";
import { randomToken, sha256 } from "./tokens-crypto";

/**
 * API tokens for machines (line PLC gateways, reporting jobs). The secret is `lmx_` and
 * 256 random bits (base64url); it is shown once at creation, and only its SHA-256 is kept.
 * ApiToken.prefix keeps the first characters so people can tell tokens apart.
 */

export const TOKEN_PREFIX = "lmx_";

export type TokenPrincipal = { kind: "token"; tokenId: number; name: string; scopes: ApiScope[] };

export function parseScopes(stored: string): ApiScope[] {
  return stored
    .split(",")
    .map((s) => s.trim())
    .filter(isApiScope);
}

type TokenClient = Pick<ReturnType<typeof db>, "apiToken">;

export async function createApiToken(
  name: string,
  scopes: ApiScope[],
  createdById: number,
  now = new Date(),
  client: TokenClient = db(),
): Promise<{ id: number; token: string; prefix: string }> {
  const unique = [...new Set(scopes)].filter(isApiScope).sort((a, b) => API_SCOPES.indexOf(a) - API_SCOPES.indexOf(b));
  if (unique.length === 0) throw new Error("A token needs at least one scope.");
  const token = TOKEN_PREFIX + randomToken();
  const prefix = token.slice(0, TOKEN_PREFIX.length + 6);
  const row = await client.apiToken.create({
    data: { name, prefix, tokenHash: sha256(token), scopes: unique.join(","), createdById, createdAt: now },
  });
  return { id: row.id, token, prefix };
}

export type TokenCheck =
  | { ok: true; principal: TokenPrincipal }
  | { ok: false; status: 401 | 403; error: string };

/** Checks a bearer token and its scope; records the last use (at most once a minute). */
export async function verifyApiToken(token: string, scope: ApiScope, now = new Date()): Promise<TokenCheck> {
  if (!token.startsWith(TOKEN_PREFIX) || token.length > 200) {
    return { ok: false, status: 401, error: "Invalid or revoked API token." };
  }
  const row = await db().apiToken.findUnique({ where: { tokenHash: sha256(token) } });
  if (!row || row.revokedAt) return { ok: false, status: 401, error: "Invalid or revoked API token." };
  const scopes = parseScopes(row.scopes);
  if (!row.lastUsedAt || now.getTime() - row.lastUsedAt.getTime() >= 60_000) {
    // Best effort, as the session touch: reads keep working when the database cannot be written.
    await db().apiToken.update({ where: { id: row.id }, data: { lastUsedAt: now } }).catch(ignoreDatabaseTrouble);
  }
  if (!scopes.includes(scope)) {
    return { ok: false, status: 403, error: `This token lacks the scope ${scope}.` };
  }
  return { ok: true, principal: { kind: "token", tokenId: row.id, name: row.name, scopes } };
}

export async function revokeApiToken(id: number, now = new Date(), client: TokenClient = db()): Promise<boolean> {
  const result = await client.apiToken.updateMany({ where: { id, revokedAt: null }, data: { revokedAt: now } });
  return result.count > 0;
}

/**
 * Admin operations with their AuditEvent, each in one transaction: a database that is
 * full or read-only half-way leaves neither a token without its audit entry nor the reverse.
 */
export async function issueApiToken(
  actor: { id: number; name: string },
  name: string,
  scopes: ApiScope[],
): Promise<{ ok: true; id: number; token: string; prefix: string } | { ok: false; error: string }> {
  const clean = name.trim();
  if (clean.length < 2 || clean.length > 80) return { ok: false, error: "A token name is 2-80 characters." };
  if (scopes.filter(isApiScope).length === 0) return { ok: false, error: "Choose at least one scope." };
  const created = await writeTransaction(async (tx) => {
    const made = await createApiToken(clean, scopes, actor.id, new Date(), tx);
    await tx.auditEvent.create({
      data: {
        actorId: actor.id,
        actorName: actor.name,
        action: "token.create",
        entity: "api-token",
        entityId: String(made.id),
        after: JSON.stringify({ name: clean, prefix: made.prefix, scopes }),
      },
    });
    return made;
  });
  return { ok: true, ...created };
}

export async function withdrawApiToken(actor: { id: number; name: string }, id: number): Promise<{ ok: true } | { ok: false; error: string }> {
  const row = await db().apiToken.findUnique({ where: { id } });
  if (!row) return { ok: false, error: "No such token." };
  const revoked = await writeTransaction(async (tx) => {
    if (!(await revokeApiToken(id, new Date(), tx))) return false;
    await tx.auditEvent.create({
      data: {
        actorId: actor.id,
        actorName: actor.name,
        action: "token.revoke",
        entity: "api-token",
        entityId: String(id),
        before: JSON.stringify({ name: row.name, prefix: row.prefix, scopes: row.scopes }),
      },
    });
    return true;
  });
  if (!revoked) return { ok: false, error: "That token was already revoked." };
  return { ok: true };
}
