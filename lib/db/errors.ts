/**
 * What a failing database means to the person in front of the screen, in one place.
 *
 * SQLite answers a full disk with SQLITE_FULL, a read-only file or mount with
 * SQLITE_READONLY*, a write lock held past the busy timeout with SQLITE_BUSY*, a
 * failing disk with SQLITE_IOERR*, a damaged file with SQLITE_CORRUPT/SQLITE_NOTADB and
 * a missing or unreachable file with SQLITE_CANTOPEN. better-sqlite3 throws these as
 * SqliteError with `code`; Prisma's driver adapter wraps the same error in a
 * PrismaClientKnownRequestError whose `meta.driverAdapterError.cause.originalCode` keeps
 * the SQLite code (a busy timeout arrives there as kind "SocketTimeout", Prisma code
 * P1008). Every write runs in one transaction, so when any of these is thrown nothing
 * of that write was stored: the caller may say so and ask for a retry.
 */

export type DatabaseTroubleKind = "full" | "read-only" | "busy" | "io" | "corrupt" | "unavailable";

export type DatabaseTrouble = {
  kind: DatabaseTroubleKind;
  /** The SQLite code seen (SQLITE_FULL, SQLITE_READONLY_DBMOVED, …). */
  sqliteCode: string;
  /** A plain sentence for the user: what happened, that nothing was stored, what to do. */
  message: string;
  /** HTTP status for API answers: 503, the condition is on the server's side and passes. */
  status: 503;
  /** Seconds a client should wait before retrying (the Retry-After header). */
  retryAfterSeconds: number;
};

const MESSAGES: Record<DatabaseTroubleKind, { message: string; retryAfterSeconds: number }> = {
  full: {
    message:
      "The database is full (no space left on the server's disk). Nothing was stored; keep the numbers and try again once the administrator has freed space.",
    retryAfterSeconds: 60,
  },
  "read-only": {
    message:
      "The database is read-only at the moment, so nothing can be stored. Nothing was stored; keep the numbers and try again once the administrator has made it writable.",
    retryAfterSeconds: 60,
  },
  busy: {
    message: "The database is busy with another change. Nothing was stored; try again in a few seconds.",
    retryAfterSeconds: 5,
  },
  io: {
    message:
      "The server could not read or write the database file (a disk or file-system error). Nothing was stored; try again, and tell the administrator if it keeps happening.",
    retryAfterSeconds: 30,
  },
  corrupt: {
    message:
      "The database file is damaged. Nothing was stored; tell the administrator, who can restore the last backup (npm run db:restore).",
    retryAfterSeconds: 300,
  },
  unavailable: {
    message: "The server cannot open the database file. Nothing was stored; tell the administrator.",
    retryAfterSeconds: 60,
  },
};

function kindOf(code: string): DatabaseTroubleKind | null {
  if (code === "SQLITE_FULL") return "full";
  if (code.startsWith("SQLITE_READONLY")) return "read-only";
  if (code.startsWith("SQLITE_BUSY") || code.startsWith("SQLITE_LOCKED")) return "busy";
  if (code.startsWith("SQLITE_IOERR")) return "io";
  if (code.startsWith("SQLITE_CORRUPT") || code === "SQLITE_NOTADB") return "corrupt";
  if (code.startsWith("SQLITE_CANTOPEN")) return "unavailable";
  return null;
}

type Loose = { code?: unknown; cause?: unknown; meta?: { driverAdapterError?: { cause?: unknown } } };

/** The SQLite code behind an error: better-sqlite3's own, or the one Prisma wrapped. */
export function sqliteCode(error: unknown): string | null {
  const seen = new Set<unknown>();
  let current: unknown = error;
  // Follow wrappers (Prisma meta, Error.cause) a few levels down.
  for (let depth = 0; depth < 6 && current && typeof current === "object" && !seen.has(current); depth++) {
    seen.add(current);
    const e = current as Loose & { originalCode?: unknown; kind?: unknown };
    if (typeof e.originalCode === "string" && e.originalCode.startsWith("SQLITE_")) return e.originalCode;
    if (typeof e.code === "string" && e.code.startsWith("SQLITE_")) return e.code;
    // Prisma's code for a busy timeout on the driver adapter, without the original at hand.
    if (e.kind === "SocketTimeout") return "SQLITE_BUSY";
    current = e.meta?.driverAdapterError?.cause ?? e.meta?.driverAdapterError ?? e.cause;
  }
  return null;
}

/**
 * The plain-language reading of a database error, or null when the error is not one of
 * the conditions above (a bug, a constraint: let the caller's usual handling run).
 */
export function databaseTrouble(error: unknown): DatabaseTrouble | null {
  const code = sqliteCode(error);
  if (!code) return null;
  const kind = kindOf(code);
  if (!kind) return null;
  return { kind, sqliteCode: code, status: 503, ...MESSAGES[kind] };
}

/** The JSON 503 for a database condition: `{ error, code: "database-<kind>" }` with Retry-After. */
export function databaseTroubleResponse(trouble: DatabaseTrouble): Response {
  return Response.json(
    { error: trouble.message, code: `database-${trouble.kind}` },
    { status: trouble.status, headers: { "cache-control": "no-store", "retry-after": String(trouble.retryAfterSeconds) } },
  );
}

/** A one-line log entry for the administrator (the user sees the plain message). */
export function describeTroubleForLog(trouble: DatabaseTrouble, where: string): string {
  return `[database ${trouble.kind}] ${where}: ${trouble.sqliteCode}`;
}

/**
 * For best-effort writes (a session's or token's last-seen time): swallows a database
 * condition above, rethrows anything else.  `await touch().catch(ignoreDatabaseTrouble)`
 */
export function ignoreDatabaseTrouble(error: unknown): void {
  if (!databaseTrouble(error)) throw error;
}

/** Digests of database-condition errors start so: `linemix-db-<kind>-<reference>`. */
export const TROUBLE_DIGEST_PREFIX = "linemix-db-";

const KINDS: readonly DatabaseTroubleKind[] = ["full", "read-only", "busy", "io", "corrupt", "unavailable"];

function shortReference(): string {
  return globalThis.crypto.randomUUID().slice(0, 8);
}

/**
 * Gives a database-condition error a digest naming the condition (Next keeps a digest an
 * error already has, and it is the one thing of a server error that reaches app/error.tsx
 * in production). Anything else is returned untouched. Called by the Prisma client's
 * query extension (lib/db/client.ts).
 *
 * @example
 * markDatabaseTrouble({ code: "SQLITE_FULL" }).digest; // "linemix-db-full-3f2a9c1e" (random reference)
 */
export function markDatabaseTrouble<E>(error: E): E {
  const trouble = databaseTrouble(error);
  if (trouble && error && typeof error === "object") {
    const e = error as { digest?: unknown };
    if (typeof e.digest !== "string") {
      try {
        e.digest = `${TROUBLE_DIGEST_PREFIX}${trouble.kind}-${shortReference()}`;
      } catch {
        // A frozen error object: the page shows the generic message, nothing worse.
      }
    }
  }
  return error;
}

/**
 * The plain message for a digest made by markDatabaseTrouble, or null for any other digest.
 * Safe in the browser (no imports): app/error.tsx calls it.
 *
 * @example
 * troubleFromDigest("linemix-db-read-only-3f2a9c1e")?.kind; // "read-only"
 * troubleFromDigest("2481116385"); // null
 */
export function troubleFromDigest(digest: string | undefined | null): { kind: DatabaseTroubleKind; message: string; reference: string } | null {
  if (typeof digest !== "string" || !digest.startsWith(TROUBLE_DIGEST_PREFIX)) return null;
  const rest = digest.slice(TROUBLE_DIGEST_PREFIX.length);
  const kind = KINDS.find((k) => rest.startsWith(`${k}-`));
  if (!kind) return null;
  return { kind, message: MESSAGES[kind].message, reference: rest.slice(kind.length + 1) };
}
