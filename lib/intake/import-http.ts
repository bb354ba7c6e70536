import type { Principal } from "@/lib/auth/guard";
import { roleAtLeast } from "@/lib/auth/roles";
import { actorFromPrincipal } from "./actor";
import { formatProblem } from "./csv-read";
import { importCsv, type ImportOutcome } from "./import";

/**
 * POST /api/v1/imports — the import page's upload (the file is the request body, read
 * as a stream). ?dryRun=1 checks and previews; ?expect=<sha256> imports only the very
 * bytes that were previewed. Engineers signed in with a password may import (API
 * tokens send rows to /api/v1/tallies instead); creating missing codes needs an admin.
 */

export const MAX_UPLOAD_BYTES = 200 * 1024 * 1024;
const SHOWN_PROBLEMS = 500;

export type ImportPreview = {
  status: ImportOutcome["status"];
  kind: ImportOutcome["kind"];
  fileName: string | null;
  contentHash: string;
  rows: number;
  problems: string[];
  problemCount: number;
  duplicateOf: ImportOutcome["duplicateOf"];
  created: ImportOutcome["created"];
  batchId: number | null;
  summary: ImportOutcome["summary"];
  sample: string[][];
  header: string[];
  existingEntries: number;
};

export function previewOf(outcome: ImportOutcome): ImportPreview {
  return {
    status: outcome.status,
    kind: outcome.kind,
    fileName: outcome.fileName,
    contentHash: outcome.contentHash,
    rows: outcome.rows,
    problems: outcome.problems.slice(0, SHOWN_PROBLEMS).map(formatProblem),
    problemCount: outcome.problems.length + outcome.moreProblems,
    duplicateOf: outcome.duplicateOf,
    created: outcome.created,
    batchId: outcome.batchId,
    summary: outcome.summary,
    sample: outcome.sample,
    header: outcome.header,
    existingEntries: outcome.existingEntries,
  };
}

const json = (status: number, body: unknown) => Response.json(body, { status, headers: { "cache-control": "no-store" } });

export async function postImport(request: Request, principal: Principal): Promise<Response> {
  if (principal.kind === "token") {
    return json(403, { error: "CSV imports are made by engineers (the import page or npm run import); machines send rows to POST /api/v1/tallies.", code: "forbidden" });
  }
  if (!roleAtLeast(principal.role, "engineer") || principal.sessionKind === "badge") {
    return json(403, { error: "Imports are for engineers signed in with a password.", code: "forbidden" });
  }
  const url = new URL(request.url);
  const flag = (name: string) => url.searchParams.get(name) === "1";
  const addMissing = flag("addMissing");
  if (addMissing && !(principal.kind === "user" && roleAtLeast(principal.role, "admin"))) {
    return json(403, { error: "Only an administrator can create missing lines, shifts, categories or products.", code: "forbidden" });
  }
  const declared = Number(request.headers.get("content-length") ?? "0");
  if (declared > MAX_UPLOAD_BYTES) return json(413, { error: `The file is larger than ${MAX_UPLOAD_BYTES / 1024 / 1024} MiB; use npm run import.`, code: "too-large" });
  if (!request.body) return json(400, { error: "No file was sent.", code: "invalid" });
  const expected = url.searchParams.get("expect");
  if (expected !== null && !/^[0-9a-f]{64}$/.test(expected)) return json(400, { error: "expect must be a SHA-256 in hex.", code: "invalid" });
  const rawName = request.headers.get("x-file-name");
  let fileName: string | null = null;
  try {
    fileName = rawName ? decodeURIComponent(rawName).replace(/[\\/]/g, "_").slice(0, 200) : null;
  } catch {
    fileName = null;
  }

  const body = request.body;
  async function* limited(): AsyncGenerator<Uint8Array> {
    const reader = body.getReader();
    let received = 0;
    for (;;) {
      const { done, value } = await reader.read();
      if (done) return;
      received += value.length;
      if (received > MAX_UPLOAD_BYTES) {
        await reader.cancel();
        throw new Error(`the file is larger than ${MAX_UPLOAD_BYTES / 1024 / 1024} MiB; use npm run import`);
      }
      yield value;
    }
  }
  const outcome = await importCsv(limited(), {
    actor: actorFromPrincipal(principal),
    fileName,
    dryRun: flag("dryRun") || expected === null,
    addMissing,
    force: flag("force"),
    expectedHash: expected,
  });
  return json(outcome.status === "refused" ? 422 : outcome.status === "imported" ? 201 : 200, previewOf(outcome));
}
