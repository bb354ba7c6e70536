import { authenticateApi } from "@/lib/auth/guard";
import { withErrorHandling } from "@/lib/http/errors";
import { postImport } from "@/lib/intake/import-http";

export const dynamic = "force-dynamic";

/** CSV upload from the import page: ?dryRun=1 previews; ?expect=<sha256> imports the previewed bytes. */
export const POST = withErrorHandling(async (request: Request) => {
  // The engineer rule (a password session of an engineer or admin; badge sessions refused);
  // postImport then refuses API tokens: imports are a person's act.
  const principal = await authenticateApi(request, "analysis:read");
  if (principal instanceof Response) return principal;
  return postImport(request, principal);
});
