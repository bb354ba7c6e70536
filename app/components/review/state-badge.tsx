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
