import { randomUUID } from "node:crypto";
import { AuthError } from "@/lib/auth/access";
import { databaseTrouble, databaseTroubleResponse, describeTroubleForLog } from "@/lib/db/errors";

/**
 * Server errors are logged with a correlation id and answered without internals.
 * The id is what a user quotes to the administrator, who finds `[error <id>]` in the log.
 */

export function newErrorId(): string {
  return randomUUID().slice(0, 8);
}

/** Logs an error under a fresh correlation id and returns the id. */
export function logServerError(error: unknown, context?: string): string {
  const id = newErrorId();
  const where = context ? ` ${context}` : "";
  console.error(`[error ${id}]${where}`, error);
  return id;
}

/** The JSON answer for an unexpected failure: `{ error: "Internal error", reference }`, 500. */
export function internalErrorResponse(id: string): Response {
  return Response.json({ error: "Internal error", reference: id }, { status: 500, headers: { "cache-control": "no-store" } });
}

/**
 * Wraps a route handler: an AuthError becomes its JSON 401/403; a database that is full,
 * read-only, busy or failing becomes a JSON 503 with Retry-After and a plain message
 * (lib/db/errors.ts; each write is one transaction, so nothing of it was stored);
 * anything else thrown is logged as `[error <id>] METHOD path` and answered with a 500
 * carrying only the id.
 *
 *   export const GET = withErrorHandling(async (request: Request) => { ... });
 */
export function withErrorHandling<A extends [Request, ...unknown[]]>(
  handler: (...args: A) => Response | Promise<Response>,
): (...args: A) => Promise<Response> {
  return async (...args: A) => {
    try {
      return await handler(...args);
    } catch (error) {
      if (error instanceof AuthError) {
        return Response.json({ error: error.message }, { status: error.status, headers: { "cache-control": "no-store" } });
      }
      const request = args[0];
      let where = "";
      try {
        where = `${request.method} ${new URL(request.url).pathname}`;
      } catch {
        where = "route handler";
      }
      const trouble = databaseTrouble(error);
      if (trouble) {
        console.warn(describeTroubleForLog(trouble, where));
        return databaseTroubleResponse(trouble);
      }
      return internalErrorResponse(logServerError(error, where));
    }
  };
}
