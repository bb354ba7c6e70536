/**
 * The review workflow of a flagged period. An episode starts as "new"; someone takes it
 * ("under investigation"); it ends explained, with no action needed, or as a false
 * alarm. A closed episode can be reopened for investigation when new evidence arrives.
 * Pure: no database, so the pages, the actions and the tests share one rule.
 */

export const EPISODE_STATUSES = ["new", "investigating", "explained", "no-action", "false-alarm"] as const;
export type EpisodeStatus = (typeof EPISODE_STATUSES)[number];

export const STATUS_LABELS: Record<EpisodeStatus, string> = {
  new: "New",
  investigating: "Under investigation",
  explained: "Explained",
  "no-action": "No action",
  "false-alarm": "False alarm",
};

/** Still waiting for a decision: counted in the header of every page. */
export const OPEN_STATUSES: readonly EpisodeStatus[] = ["new", "investigating"];

/** Where each status may go next. */
export const TRANSITIONS: Record<EpisodeStatus, readonly EpisodeStatus[]> = {
  new: ["investigating", "no-action", "false-alarm"],
  investigating: ["explained", "no-action", "false-alarm"],
  explained: ["investigating"],
  "no-action": ["investigating"],
  "false-alarm": ["investigating"],
};

export function isEpisodeStatus(value: unknown): value is EpisodeStatus {
  return typeof value === "string" && (EPISODE_STATUSES as readonly string[]).includes(value);
}

export function isOpenStatus(status: string): boolean {
  return (OPEN_STATUSES as readonly string[]).includes(status);
}

export function canTransition(from: EpisodeStatus, to: EpisodeStatus): boolean {
  return TRANSITIONS[from].includes(to);
}

/**
 * A reason is required for every decision (closing, reopening); taking a new episode
 * into investigation needs none.
 */
export function reasonRequired(from: EpisodeStatus, to: EpisodeStatus): boolean {
  return !(from === "new" && to === "investigating");
}

/** Label for any stored status string (unknown values are shown as they are). */
export function statusLabel(status: string): string {
  return isEpisodeStatus(status) ? STATUS_LABELS[status] : status;
}
