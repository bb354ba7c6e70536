import type { z } from "zod";
import { rawDb } from "../db/client";
import { csvStream } from "../csv/write-csv";
import { iterateCellTotals, listCellTotals } from "../db/tallies";
import type { Actor } from "./actor";
import { TALLY_COLUMNS } from "./csv-read";
import { planFloorSheet, planInspectionBatch, planTallyBatch } from "./plans";
import {
  FloorSheetSchema,
  IDEMPOTENCY_KEY_PATTERN,
  InspectionBatchSchema,
  TallyBatchSchema,
  TallyQuerySchema,
  formatFieldProblem,
  problemsFromZod,
  type FieldProblem,
} from "./schemas";
import { submitOnce, type SubmitOutcome } from "./submissions";

/**
 * HTTP side of the JSON API, as plain functions of (Request, Actor) so route handlers
 * stay three lines (authenticate, call, return) and tests call the same code.
 */

export const MAX_BODY_BYTES = 4 * 1024 * 1024;
export const MAX_GET_ROWS = 100_000;

const NO_STORE = { "cache-control": "no-store" };

export function jsonError(status: number, code: string, error: string, extra: Record<string, unknown> = {}): Response {
  return Response.json({ error, code, ...extra }, { status, headers: NO_STORE });
}

function invalid(problems: FieldProblem[]): Response {
  return jsonError(400, "invalid", "The request has problems; nothing was stored.", {
    problems,
    messages: problems.map(formatFieldProblem),
  });
}

/** The JSON body, or the error Response (too large, not JSON). */
export async function readJson(request: Request): Promise<unknown | Response> {
  const declared = Number(request.headers.get("content-length") ?? "0");
  if (declared > MAX_BODY_BYTES) return jsonError(413, "too-large", `The body is larger than ${MAX_BODY_BYTES} bytes; send smaller batches.`);
  const type = request.headers.get("content-type") ?? "";
  if (type && !/^application\/(.+\+)?json\b/i.test(type)) return jsonError(415, "unsupported-media-type", "Send the body as application/json.");
  if (!request.body) return jsonError(400, "invalid", "The request has no body.");
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    size += value.length;
    if (size > MAX_BODY_BYTES) {
      await reader.cancel();
      return jsonError(413, "too-large", `The body is larger than ${MAX_BODY_BYTES} bytes; send smaller batches.`);
    }
    chunks.push(value);
  }
  const text = new TextDecoder().decode(Buffer.concat(chunks));
  try {
    return JSON.parse(text) as unknown;
  } catch {
    return jsonError(400, "invalid", "The body is not valid JSON.");
  }
}

/** Idempotency-Key header or body field (they must agree when both are given). */
export function idempotencyKey(request: Request, body: unknown): string | Response {
  const header = request.headers.get("idempotency-key")?.trim() || null;
  const field =
    body && typeof body === "object" && "idempotencyKey" in body && typeof (body as { idempotencyKey: unknown }).idempotencyKey === "string"
      ? (body as { idempotencyKey: string }).idempotencyKey
      : null;
  if (header && field && header !== field) {
    return jsonError(400, "invalid", "The Idempotency-Key header and the body's idempotencyKey differ.");
  }
  const key = header ?? field;
  if (!key) return jsonError(400, "invalid", "An Idempotency-Key header (or idempotencyKey in the body) is required, e.g. a UUID.");
  if (!IDEMPOTENCY_KEY_PATTERN.test(key)) {
    return jsonError(400, "invalid", "An idempotency key is 8–128 letters, digits, '-', '_' or '.' (a UUID fits).");
  }
  return key;
}

/** The HTTP answer for a submission outcome. */
export function outcomeResponse(outcome: SubmitOutcome, extra: () => Record<string, unknown> = () => ({})): Response {
  switch (outcome.status) {
    case "created":
      return Response.json({ ...outcome.result, replay: false, ...extra() }, { status: 201, headers: NO_STORE });
    case "replay":
      return Response.json({ ...outcome.result, replay: true, ...extra() }, { status: 200, headers: { ...NO_STORE, "idempotent-replayed": "true" } });
    case "conflict":
      return jsonError(409, "key-reused", outcome.message, { submissionId: outcome.submissionId });
    case "stale":
      return jsonError(409, "sheet-changed", outcome.message);
    case "forbidden":
      return jsonError(403, "forbidden", outcome.message);
    case "invalid":
      return invalid(outcome.problems);
  }
}

async function parseBatch<S extends z.ZodType>(request: Request, schema: S): Promise<{ key: string; data: z.infer<S> } | Response> {
  const body = await readJson(request);
  if (body instanceof Response) return body;
  const key = idempotencyKey(request, body);
  if (key instanceof Response) return key;
  const parsed = schema.safeParse(body);
  if (!parsed.success) return invalid(problemsFromZod(parsed.error));
  return { key, data: parsed.data };
}

/** POST /api/v1/tallies */
export async function postTallies(request: Request, actor: Actor): Promise<Response> {
  const input = await parseBatch(request, TallyBatchSchema);
  if (input instanceof Response) return input;
  const { idempotencyKey: _k, ...content } = input.data;
  return outcomeResponse(await submitOnce({ key: input.key, kind: "tallies", content, actor, build: (sqlite) => planTallyBatch(sqlite, input.data) }));
}

/** POST /api/v1/inspections */
export async function postInspections(request: Request, actor: Actor): Promise<Response> {
  const input = await parseBatch(request, InspectionBatchSchema);
  if (input instanceof Response) return input;
  const { idempotencyKey: _k, ...content } = input.data;
  return outcomeResponse(
    await submitOnce({ key: input.key, kind: "inspections", content, actor, build: (sqlite) => planInspectionBatch(sqlite, input.data) }),
  );
}

/** POST /api/v1/floor-sheets: one floor sheet; answers with the sheet's totals after it. */
export async function postFloorSheet(request: Request, actor: Actor, now = new Date()): Promise<Response> {
  const input = await parseBatch(request, FloorSheetSchema);
  if (input instanceof Response) return input;
  const sheet = input.data;
  const { idempotencyKey: _k, ...content } = sheet;
  const outcome = await submitOnce({ key: input.key, kind: "floor-sheet", content, actor, now, build: (sqlite) => planFloorSheet(sqlite, actor, sheet, now) });
  return outcomeResponse(outcome, () => ({ sheet: sheetSummary(sheet.date, sheet.shift, sheet.line) }));
}

/** Current totals of a sheet by codes (for the confirmation after a submission). */
export function sheetSummary(date: string, shift: string, line: string): { defects: number; units: number; counts: Record<string, number> } {
  const sqlite = rawDb();
  const counts: Record<string, number> = {};
  let defects = 0;
  for (const row of sqlite
    .prepare(
      `SELECT c.code AS category, SUM(e.count) AS n FROM TallyEntry e
       JOIN DefectCategory c ON c.id = e.categoryId JOIN Line l ON l.id = e.lineId JOIN Shift s ON s.id = e.shiftId
       WHERE e.productionDate = ? AND s.code = ? AND l.code = ? AND NOT EXISTS (SELECT 1 FROM TallyEntry x WHERE x.supersedesId = e.id)
       GROUP BY c.code`,
    )
    .all(date, shift, line) as { category: string; n: number }[]) {
    counts[row.category] = row.n;
    defects += row.n;
  }
  const u = sqlite
    .prepare(
      `SELECT COALESCE(SUM(e.units), 0) AS n FROM InspectionCount e JOIN Line l ON l.id = e.lineId JOIN Shift s ON s.id = e.shiftId
       WHERE e.productionDate = ? AND s.code = ? AND l.code = ? AND NOT EXISTS (SELECT 1 FROM InspectionCount x WHERE x.supersedesId = e.id)`,
    )
    .get(date, shift, line) as { n: number };
  return { defects, units: u.n, counts };
}

/** GET /api/v1/tallies?from=&to=&line=P1&line=P2[&format=csv] */
export function getTallies(request: Request): Response {
  const url = new URL(request.url);
  const lines = url.searchParams.getAll("line").flatMap((l) => l.split(",")).map((l) => l.trim()).filter(Boolean);
  const parsed = TallyQuerySchema.safeParse({
    from: url.searchParams.get("from") ?? undefined,
    to: url.searchParams.get("to") ?? undefined,
    line: lines.length ? lines : undefined,
  });
  if (!parsed.success) return invalid(problemsFromZod(parsed.error));
  const q = parsed.data;
  if (q.line?.length) {
    const known = new Set((rawDb().prepare("SELECT code FROM Line").all() as { code: string }[]).map((r) => r.code));
    const unknown = q.line.filter((l) => !known.has(l));
    if (unknown.length) return invalid(unknown.map((l) => ({ row: null, field: "line", message: `unknown line "${l}"` })));
  }
  const filter = { from: q.from, to: q.to, lineCodes: q.line ?? null };
  if (url.searchParams.get("format") === "csv") {
    return new Response(csvStream(TALLY_COLUMNS, iterateCellTotals(filter)), {
      headers: {
        ...NO_STORE,
        "content-type": "text/csv; charset=utf-8",
        "content-disposition": `attachment; filename="tallies-${q.from}-${q.to}.csv"`,
      },
    });
  }
  const { rows, truncated } = listCellTotals(filter, MAX_GET_ROWS);
  if (truncated) {
    return jsonError(422, "too-many-rows", `More than ${MAX_GET_ROWS.toLocaleString("en")} cells; narrow the dates or lines, or add format=csv.`);
  }
  return Response.json({ from: q.from, to: q.to, lines: q.line ?? null, rows }, { headers: NO_STORE });
}
