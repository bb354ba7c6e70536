import { rawDb } from "@/lib/db/client";
import { warmUpStatus } from "@/lib/monitor/service";

export const dynamic = "force-dynamic";

/**
 * Liveness and database reachability, open without sign-in (for monitors and test
 * runners), with how far the start-up scan warm-up has come (`scans`: idle, warming or
 * ready, and k of N comparisons built) so a monitor can tell "up" from "up and warm".
 */
export function GET() {
  const { state, ready, total } = warmUpStatus();
  try {
    rawDb().prepare("SELECT 1").get();
    return Response.json({ status: "ok", scans: { state, ready, total } });
  } catch {
    return Response.json({ status: "database-unavailable", scans: { state, ready, total } }, { status: 503 });
  }
}
