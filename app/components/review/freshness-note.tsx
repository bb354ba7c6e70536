import { freshnessText, shownFreshness, type PageFreshness } from "@/lib/review/freshness";

/**
 * "Results as of 10:42:05 · 12 entries since, being added", small, under a page's
 * heading: the scans behind a review page may be a few seconds behind the floor
 * (lib/monitor/service PAGE_MAX_LAG_MS), and the page says how far rather than showing
 * an older result as if it were the latest. Rendered on the server at request time.
 */
export function FreshnessNote({ freshness }: { freshness: PageFreshness }) {
  const text = freshnessText(shownFreshness(freshness));
  if (!text.asOf) return null;
  return (
    <p className="freshness muted small" data-testid="freshness">
      {text.asOf}
      {text.pending ? <> · {text.pending}</> : null}
    </p>
  );
}
