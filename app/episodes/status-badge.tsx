import { isOpenStatus, statusLabel } from "@/lib/episodes/status";

const ICON: Record<string, string> = { new: "●", investigating: "◐", explained: "✓", "no-action": "–", "false-alarm": "✕" };

/** A record's review status: a word and an icon as well as a colour. */
export function StatusBadge({ status }: { status: string }) {
  return (
    <span className={`state episode-status episode-status-${status}${isOpenStatus(status) ? " state-flagged" : ""}`} data-status={status}>
      <span aria-hidden="true">{ICON[status] ?? "•"}</span>
      {statusLabel(status)}
    </span>
  );
}
