import { downloadEpisodeList } from "@/lib/episodes/download";
import { withErrorHandling } from "@/lib/http/errors";

export const dynamic = "force-dynamic";
export const runtime = "nodejs";

/** The filtered list of flagged periods as CSV (long form) or JSON. */
export const GET = withErrorHandling(async (request: Request, context: { params: Promise<{ format: string }> }) => {
  const { format } = await context.params;
  return downloadEpisodeList(request, format);
});
