import { authenticateApi } from "@/lib/auth/guard";
import { withErrorHandling } from "@/lib/http/errors";
import { actorFromPrincipal } from "@/lib/intake/actor";
import { postFloorSheet } from "@/lib/intake/http";

export const dynamic = "force-dynamic";

/** One floor sheet from /entry (session or token with tallies:write); retried by the page until acknowledged. */
export const POST = withErrorHandling(async (request: Request) => {
  const principal = await authenticateApi(request, "tallies:write");
  if (principal instanceof Response) return principal;
  return postFloorSheet(request, actorFromPrincipal(principal));
});
