import { databaseTrouble } from "@/lib/db/errors";
import { countOpenEpisodes } from "@/lib/db/episodes";
import { logServerError } from "@/lib/http/errors";
import { PAGE_MAX_LAG_MS } from "@/lib/monitor/service";
import { keptUntilRecordsChange } from "@/lib/review/kept";
import { liveSourceWith } from "./live-source";
import { syncAllComparisons } from "./sync";

/**
 * The header's count of open flagged periods, with the records brought up to date first
 * so a period the scan has just found is counted on whatever page the engineer is on.
 * The sync is best effort (a failing scan or a read-only database leaves the count as the
 * records stand) and runs at most once per SYNC_INTERVAL_MS per process; kept scan
 * results make it cheap when nothing changed. A page waits for it at most
 * SYNC_WAIT_MS: after a start the scans are still being built (lib/monitor/service's
 * warm-up), and the header must not hold every page until all of them are; the sync
 * then finishes in the background and the next page counts what it found.
 */

export const SYNC_INTERVAL_MS = 15_000;

/** How long a page's header waits for the sync before counting the records as they stand. */
export const SYNC_WAIT_MS = 250;

// Kept scans up to the pages' bound behind: a header must not patch every scan on every page.
const headerSource = liveSourceWith({ maxLagMs: PAGE_MAX_LAG_MS });

// The count changes only with the records: kept until they change, not re-counted per page.
const keptCount = keptUntilRecordsChange(() => countOpenEpisodes(), 1);

let last = 0;
let running: Promise<void> | null = null;

async function syncNowAndThen(): Promise<void> {
  if (running) return running;
  if (Date.now() - last < SYNC_INTERVAL_MS) return;
  running = syncAllComparisons(headerSource)
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

/** Open flagged periods, after a sync of the records (waited for at most SYNC_WAIT_MS). */
export async function openEpisodeCount(): Promise<number> {
  let timer: ReturnType<typeof setTimeout> | undefined;
  const waited = new Promise<void>((resolve) => (timer = setTimeout(resolve, SYNC_WAIT_MS)));
  await Promise.race([syncNowAndThen(), waited]);
  clearTimeout(timer);
  return keptCount("open");
}
