import { databaseTrouble } from "@/lib/db/errors";
import { countOpenEpisodes } from "@/lib/db/episodes";
import { logServerError } from "@/lib/http/errors";
import { liveSource } from "./live-source";
import { syncAllComparisons } from "./sync";

/**
 * The header's count of open flagged periods, with the records brought up to date first
 * so a period the scan has just found is counted on whatever page the engineer is on.
 * The sync is best effort (a failing scan or a read-only database leaves the count as the
 * records stand) and runs at most once per SYNC_INTERVAL_MS per process; kept scan
 * results make it cheap when nothing changed.
 */

export const SYNC_INTERVAL_MS = 15_000;

let last = 0;
let running: Promise<void> | null = null;

async function syncNowAndThen(): Promise<void> {
  if (running) return running;
  if (Date.now() - last < SYNC_INTERVAL_MS) return;
  running = syncAllComparisons(liveSource)
    .then(() => undefined)
    .catch((error: unknown) => {
      if (!databaseTrouble(error)) logServerError(error, "open-episode count sync");
    })
    .finally(() => {
      last = Date.now();
      running = null;
    });
  return running;
}

export async function openEpisodeCount(): Promise<number> {
  await syncNowAndThen();
  return countOpenEpisodes();
}
