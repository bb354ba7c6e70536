import { authenticateApi, type Principal } from "@/lib/auth/guard";
import { auditExport, getEpisode, listEpisodes, type EpisodeFilter } from "@/lib/db/episodes";
import { briefDataOf, loadEpisodeContext } from "./context";
import { episodesCsvStream, episodesJson, exportFileName, gatherEpisodes, EXPORT_FORMATS, type ExportFormat } from "./export";
import { parseEpisodeFilter } from "./filter";
import { liveSource } from "./live-source";
import { renderEpisodeBrief } from "./pdf";
import type { EpisodeSource } from "./source";
import { syncAllComparisons, syncComparison } from "./sync";
import type { Actor } from "./types";

/**
 * The download route handlers' work: authenticate (session of an engineer, or a token
 * with analysis:read), sync the records with the latest scan, build the file, record the
 * export in the audit trail, and answer with an attachment.
 */

export function actorOfPrincipal(p: Principal): Actor {
  return p.kind === "user" ? { id: p.userId, name: p.displayName } : { id: null, name: `API token “${p.name}”` };
}

const CONTENT_TYPES: Record<ExportFormat, string> = {
  csv: "text/csv; charset=utf-8",
  json: "application/json; charset=utf-8",
  pdf: "application/pdf",
};

function attachment(body: BodyInit, format: ExportFormat, fileName: string): Response {
  return new Response(body, {
    headers: {
      "content-type": CONTENT_TYPES[format],
      "content-disposition": `attachment; filename="${fileName}"`,
      "cache-control": "no-store",
      "x-content-type-options": "nosniff",
    },
  });
}

function problem(status: number, error: string): Response {
  return Response.json({ error }, { status, headers: { "cache-control": "no-store" } });
}

function formatOf(text: string): ExportFormat | null {
  return (EXPORT_FORMATS as readonly string[]).includes(text) ? (text as ExportFormat) : null;
}

/** GET /episodes/[id]/export/[format] */
export async function downloadEpisode(request: Request, idText: string, formatText: string, source: EpisodeSource = liveSource): Promise<Response> {
  const principal = await authenticateApi(request, "analysis:read");
  if (principal instanceof Response) return principal;
  const format = formatOf(formatText);
  if (!format) return problem(404, "Unknown export format; use csv, json or pdf.");
  const id = /^[1-9]\d{0,9}$/.test(idText) ? Number(idText) : null;
  const record = id === null ? null : await getEpisode(id);
  if (!record) return problem(404, "No such flagged period.");
  await syncComparison(source, record.comparison.id);
  const actor = actorOfPrincipal(principal);
  const now = new Date();
  let body: BodyInit;
  if (format === "pdf") {
    const ctx = await loadEpisodeContext(source, record.id);
    if (!ctx) return problem(404, "No such flagged period.");
    body = new Uint8Array(await renderEpisodeBrief(briefDataOf(ctx, actor.name, now)));
  } else {
    const fresh = (await getEpisode(record.id)) ?? record;
    const exported = await gatherEpisodes(source, [fresh]);
    body = format === "csv" ? episodesCsvStream(exported) : JSON.stringify(await episodesJson(exported, { exportedAt: now, exportedBy: actor.name }), null, 2);
  }
  await auditExport(actor, { format, episodeIds: [record.id], list: false, via: "download" });
  return attachment(body, format, exportFileName(format, record.id, now));
}

/** GET /episodes/export/[format]?status=…&line=… (csv or json of the filtered list). */
export async function downloadEpisodeList(request: Request, formatText: string, source: EpisodeSource = liveSource): Promise<Response> {
  const principal = await authenticateApi(request, "analysis:read");
  if (principal instanceof Response) return principal;
  const format = formatOf(formatText);
  if (!format || format === "pdf") return problem(404, "The list exports as csv or json; the PDF brief is per flagged period.");
  const { filter, errors } = parseEpisodeFilter(new URL(request.url).searchParams);
  if (errors.length > 0) return problem(400, errors.join(" "));
  await syncAllComparisons(source);
  const records = await listEpisodes(filter);
  const exported = await gatherEpisodes(source, records);
  const actor = actorOfPrincipal(principal);
  const now = new Date();
  const body =
    format === "csv"
      ? episodesCsvStream(exported)
      : JSON.stringify(await episodesJson(exported, { exportedAt: now, exportedBy: actor.name, filter }), null, 2);
  await auditExport(actor, { format, episodeIds: records.map((r) => r.id), list: true, filter: filter as EpisodeFilter, via: "download" });
  return attachment(body, format, exportFileName(format, null, now));
}
