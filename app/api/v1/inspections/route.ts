import { authenticateApi } from "@/lib/auth/guard";
import { withErrorHandling } from "@/lib/http/errors";
import { actorFromPrincipal } from "@/lib/intake/actor";
import { postInspections } from "@/lib/intake/http";

export const dynamic = "force-dynamic";

/** Adds units inspected per date, shift and line under one idempotency key (scope tallies:write). */
export const POST = withErrorHandling(async (request: Request) => {
  const principal = await authenticateApi(request, "tallies:write");
  if (principal instanceof Response) return principal;
  return postInspections(request, actorFromPrincipal(principal));
});
