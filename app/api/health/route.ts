import { rawDb } from "@/lib/db/client";

export const dynamic = "force-dynamic";

/** Liveness and database reachability, open without sign-in (for monitors and test runners). */
export function GET() {
  try {
    rawDb().prepare("SELECT 1").get();
    return Response.json({ status: "ok" });
  } catch {
    return Response.json({ status: "database-unavailable" }, { status: 503 });
  }
}
