import type Database from "better-sqlite3";
import { rawDb } from "../db/client";
import type { Actor } from "./actor";
import { planSingleCorrection } from "./plans";
import { CorrectionSchema, problemsFromZod, type FieldProblem } from "./schemas";
import { submitOnce, type SubmitOutcome } from "./submissions";

/**
 * One correction from the corrections page: a new entry that supersedes the chosen one,
 * with the reason, under the form's idempotency key (a double click stores it once;
 * supersedesId is unique as well, so an entry is never corrected twice).
 */
export async function correctEntry(
  actor: Actor,
  input: unknown,
  now = new Date(),
  sqlite: Database.Database = rawDb(),
): Promise<SubmitOutcome | { status: "invalid"; problems: FieldProblem[] }> {
  const parsed = CorrectionSchema.safeParse(input);
  if (!parsed.success) return { status: "invalid", problems: problemsFromZod(parsed.error) };
  const { idempotencyKey, ...content } = parsed.data;
  return submitOnce({
    key: idempotencyKey,
    kind: "correction",
    content,
    actor,
    now,
    sqlite,
    build: (tx) => planSingleCorrection(tx, actor, content, now),
  });
}
