import { html, type Markup } from "@/lib/review/markup";
import type { ComparisonState } from "@/lib/review/overview";

const ICON: Record<ComparisonState, string> = { flagged: "▲", quiet: "✓", untestable: "○" };
const LABEL: Record<ComparisonState, string> = { flagged: "Flagged", quiet: "Quiet", untestable: "Not testable" };

/** The state of a comparison or window: a word and an icon as well as a colour. */
export function StateBadge({ state, large = false }: { state: ComparisonState; large?: boolean }) {
  return (
    <span className={`state state-${state}${large ? " state-large" : ""}`} data-state={state}>
      <span aria-hidden="true">{ICON[state]}</span>
      {LABEL[state]}
    </span>
  );
}

/**
 * StateBadge as markup, for the tables built with lib/review/markup.
 *
 * @example
 * stateBadgeMarkup("quiet").html; // '<span class="state state-quiet" data-state="quiet"><span aria-hidden="true">✓</span>Quiet</span>'
 */
export function stateBadgeMarkup(state: ComparisonState): Markup {
  return html`<span class="state state-${state}" data-state="${state}"><span aria-hidden="true">${ICON[state]}</span>${LABEL[state]}</span>`;
}
