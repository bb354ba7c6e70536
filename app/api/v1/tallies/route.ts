import { authenticateApi } from "@/lib/auth/guard";
import { withErrorHandling } from "@/lib/http/errors";
import { actorFromPrincipal } from "@/lib/intake/actor";
import { getTallies, postTallies } from "@/lib/intake/http";

export const dynamic = "force-dynamic";

/** Adds a batch of defect counts under one idempotency key (scope tallies:write). */
export const POST = withErrorHandling(async (request: Request) => {
  const principal = await authenticateApi(request, "tallies:write");
  if (principal instanceof Response) return principal;
  return postTallies(request, actorFromPrincipal(principal));
});

/** Current tallies per date, shift, line and category (scope analysis:read). */
export const GET = withErrorHandling(async (request: Request) => {
  const principal = await authenticateApi(request, "analysis:read");
  if (principal instanceof Response) return principal;
  return getTallies(request);
});
