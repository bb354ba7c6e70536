import { withErrorHandling } from "@/lib/http/errors";
import { openApiDocument } from "@/lib/intake/openapi";

export const dynamic = "force-dynamic";

/** The OpenAPI 3.1 description of /api/v1, generated from the request schemas. Public: it holds no data. */
export const GET = withErrorHandling(async (_request: Request) => Response.json(openApiDocument(), { headers: { "cache-control": "no-store" } }));
