import { downloadEpisode } from "@/lib/episodes/download";
import { withErrorHandling } from "@/lib/http/errors";

export const dynamic = "force-dynamic";
export const runtime = "nodejs";

/** One flagged period as CSV (long form), JSON or the PDF brief. */
export const GET = withErrorHandling(async (request: Request, context: { params: Promise<{ id: string; format: string }> }) => {
  const { id, format } = await context.params;
  return downloadEpisode(request, id, format);
});
