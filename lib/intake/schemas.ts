import { z } from "zod";
import { isIsoDate } from "../dates";
import { CODE_RULE, MAX_COUNT_PER_ROW, MAX_NOTE_LENGTH, MAX_REASON_LENGTH, MAX_UNITS_PER_ROW, codeSchema } from "./codes";

/**
 * The request shapes of the JSON API (/api/v1) and the floor sheet. The OpenAPI
 * document is generated from these same schemas (openapi.ts), so the two cannot drift.
 */

export const MAX_ROWS_PER_BATCH = 10_000;

export const IDEMPOTENCY_KEY_PATTERN = /^[A-Za-z0-9._-]{8,128}$/;

export const idempotencyKeySchema = z
  .string()
  .regex(IDEMPOTENCY_KEY_PATTERN, { message: "an idempotency key is 8–128 letters, digits, '-', '_' or '.' (a UUID fits)" })
  .meta({ description: "Client-chosen key, the same on every retry of one batch (a UUID is a good choice)." });

export const isoDateSchema = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, { message: "a date is YYYY-MM-DD" })
  .refine(isIsoDate, { message: "not a real calendar date" })
  .meta({ description: "Production date (plant calendar day, YYYY-MM-DD). A shift crossing midnight belongs to the date it starts on.", format: "date" });

const code = (what: string) => codeSchema.meta({ description: `${what} code (${CODE_RULE})` });

const wholeNumber = (name: string, max: number) =>
  z
    .number({ message: `${name} must be a number` })
    .int({ message: `${name} must be a whole number` })
    .min(0, { message: `${name} must not be negative` })
    .max(max, { message: `${name} must be at most ${max.toLocaleString("en")}` });

export const TallyRowSchema = z
  .object({
    date: isoDateSchema,
    shift: code("Shift"),
    line: code("Line"),
    category: code("Defect category"),
    count: wholeNumber("count", MAX_COUNT_PER_ROW).meta({ description: "Defects of this category found in this shift on this line." }),
    product: code("Product").nullish(),
    note: z.string().max(MAX_NOTE_LENGTH, { message: `a note is at most ${MAX_NOTE_LENGTH} characters` }).nullish(),
  })
  .strict();

export const TallyBatchSchema = z
  .object({
    idempotencyKey: idempotencyKeySchema.optional(),
    rows: z
      .array(TallyRowSchema)
      .min(1, { message: "send at least one row" })
      .max(MAX_ROWS_PER_BATCH, { message: `at most ${MAX_ROWS_PER_BATCH.toLocaleString("en")} rows per batch` }),
  })
  .strict()
  .meta({ description: "Defect counts to add. The Idempotency-Key header (or idempotencyKey) makes a retry safe." });

export const UnitsRowSchema = z
  .object({
    date: isoDateSchema,
    shift: code("Shift"),
    line: code("Line"),
    units: wholeNumber("units", MAX_UNITS_PER_ROW).meta({ description: "Units inspected in this shift on this line." }),
    product: code("Product").nullish(),
  })
  .strict();

export const InspectionBatchSchema = z
  .object({
    idempotencyKey: idempotencyKeySchema.optional(),
    rows: z
      .array(UnitsRowSchema)
      .min(1, { message: "send at least one row" })
      .max(MAX_ROWS_PER_BATCH, { message: `at most ${MAX_ROWS_PER_BATCH.toLocaleString("en")} rows per batch` }),
  })
  .strict()
  .meta({ description: "Units inspected to add, per date, shift and line." });

/**
 * One floor sheet: every active category of one line, shift and date.
 * - new:     nothing was recorded when the sheet was opened; every category is stored, zeros too.
 * - add:     the numbers are added to what is recorded (zeros are skipped).
 * - correct: the numbers are the corrected totals; only changed cells are corrected, with the reason.
 * `basis` is what the sheet showed when it was opened; "new" and "correct" are refused
 * (409) when someone else changed the sheet since, so nobody overwrites unseen counts.
 */
export const FloorSheetSchema = z
  .object({
    idempotencyKey: idempotencyKeySchema,
    date: isoDateSchema,
    shift: code("Shift"),
    line: code("Line"),
    product: code("Product").nullish(),
    note: z.string().max(MAX_NOTE_LENGTH, { message: `a note is at most ${MAX_NOTE_LENGTH} characters` }).nullish(),
    units: wholeNumber("units inspected", MAX_UNITS_PER_ROW).nullish(),
    counts: z
      .array(z.object({ category: code("Defect category"), count: wholeNumber("count", MAX_COUNT_PER_ROW) }).strict())
      .max(500),
    mode: z.enum(["new", "add", "correct"]),
    reason: z.string().max(MAX_REASON_LENGTH, { message: `a reason is at most ${MAX_REASON_LENGTH} characters` }).nullish(),
    basis: z.string().max(64),
  })
  .strict()
  .superRefine((sheet, ctx) => {
    if (sheet.mode === "correct" && !sheet.reason?.trim()) {
      ctx.addIssue({ code: "custom", path: ["reason"], message: "a correction needs a reason" });
    }
    const seen = new Set<string>();
    sheet.counts.forEach((c, i) => {
      if (seen.has(c.category)) ctx.addIssue({ code: "custom", path: ["counts", i, "category"], message: `category ${c.category} appears twice` });
      seen.add(c.category);
    });
  })
  .meta({ description: "One floor sheet (all categories of one line, shift and date)." });

export const TallyQuerySchema = z
  .object({
    from: isoDateSchema,
    to: isoDateSchema,
    line: z.array(codeSchema).max(100).optional(),
  })
  .strict()
  .refine((q) => q.from <= q.to, { message: "from is after to", path: ["from"] });

export const CorrectionSchema = z
  .object({
    idempotencyKey: idempotencyKeySchema,
    entryId: z.coerce.number().int().positive(),
    kind: z.enum(["tally", "units"]),
    value: z.coerce
      .number({ message: "the corrected value must be a number" })
      .int({ message: "the corrected value must be a whole number" })
      .min(0, { message: "the corrected value must not be negative" }),
    reason: z.string().trim().min(1, { message: "a correction needs a reason" }).max(MAX_REASON_LENGTH),
  })
  .superRefine((c, ctx) => {
    const max = c.kind === "tally" ? MAX_COUNT_PER_ROW : MAX_UNITS_PER_ROW;
    if (c.value > max) ctx.addIssue({ code: "custom", path: ["value"], message: `at most ${max.toLocaleString("en")}` });
  });

export type TallyBatch = z.infer<typeof TallyBatchSchema>;
export type InspectionBatch = z.infer<typeof InspectionBatchSchema>;
export type FloorSheet = z.infer<typeof FloorSheetSchema>;

export type FieldProblem = { row: number | null; field: string; message: string };

/** zod issues as per-row problems: rows[3].count → { row: 3, field: "count", … }. */
export function problemsFromZod(error: z.ZodError): FieldProblem[] {
  return error.issues.map((issue) => {
    const path = issue.path.map(String);
    if ((path[0] === "rows" || path[0] === "counts") && /^\d+$/.test(path[1] ?? "")) {
      return { row: Number(path[1]), field: path.slice(2).join(".") || path[0], message: issue.message };
    }
    return { row: null, field: path.join(".") || "body", message: issue.message };
  });
}

export function formatFieldProblem(p: FieldProblem): string {
  return p.row === null ? `${p.field}: ${p.message}` : `row ${p.row}${p.field ? ` ${p.field}` : ""}: ${p.message}`;
}
