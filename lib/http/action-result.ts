import type { ZodError } from "zod";
import { AuthError } from "@/lib/auth/access";
import { databaseTrouble, describeTroubleForLog } from "@/lib/db/errors";

/**
 * The typed result a server action returns to its form (useActionState). Actions never
 * throw for expected failures; a guard refusal becomes { ok: false, status, error }.
 */
export type ActionResult<T = undefined> =
  | { ok: true; message: string; data?: T }
  | { ok: false; error: string; status?: 400 | 401 | 403 | 409 | 500 | 503; fieldErrors?: Record<string, string> };

export const IDLE: ActionResult<never> = { ok: false, error: "" };

/** The result for a refused guard, or null when the error is something else (rethrow it). */
export function authFailure(error: unknown): (ActionResult<never> & { ok: false }) | null {
  if (error instanceof AuthError) return { ok: false, status: error.status, error: error.message };
  return null;
}

/** First message per field from a zod error, plus a summary. */
export function validationFailure(error: ZodError): ActionResult<never> & { ok: false } {
  const fieldErrors: Record<string, string> = {};
  for (const issue of error.issues) {
    const key = issue.path.join(".") || "form";
    fieldErrors[key] ??= issue.message;
  }
  return { ok: false, status: 400, error: Object.values(fieldErrors)[0] ?? "Check the form.", fieldErrors };
}

/**
 * The result for a database that is full, read-only, busy or failing (lib/db/errors.ts),
 * or null when the error is something else. Every write is one transaction, so the
 * message may say that nothing was stored. Logs one line for the administrator.
 */
export function databaseFailure(error: unknown, where = "server action"): (ActionResult<never> & { ok: false }) | null {
  const trouble = databaseTrouble(error);
  if (!trouble) return null;
  console.warn(describeTroubleForLog(trouble, where));
  return { ok: false, status: 503, error: trouble.message };
}

/**
 * Runs a server action's work and turns the expected failures thrown on the way into its
 * typed result: a refused guard (authFailure) and a database condition (databaseFailure).
 * Anything else, Next's redirect() included, is rethrown.
 *
 *   export async function saveAction(_prev: ActionResult, form: FormData) {
 *     return actionOutcome("setup: save", async () => { ...; return { ok: true, message: "Saved." }; });
 *   }
 */
export async function actionOutcome<R extends { ok: boolean }>(where: string, work: () => Promise<R>): Promise<R | (ActionResult<never> & { ok: false })> {
  try {
    return await work();
  } catch (error) {
    const known = authFailure(error) ?? databaseFailure(error, where);
    if (known) return known;
    throw error;
  }
}
