import type { ComparisonRecord } from "@/lib/db/comparisons";

const ADJUST: Record<ComparisonRecord["adjust"], string> = {
  bh: "false discovery rate (Benjamini–Hochberg)",
  bonferroni: "Bonferroni",
  none: "none",
};

/** One line of the comparison's settings, so every chart is read with its rules in view. */
export function SettingsSummary({ comparison: c }: { comparison: ComparisonRecord }) {
  return (
    <p className="muted small settings-summary">
      Windows of {c.windowDays} {c.windowDays === 1 ? "day" : "days"}, stepping {c.stepDays} {c.stepDays === 1 ? "day" : "days"}; α = {c.alpha}; adjustment across
      windows: {ADJUST[c.adjust]}
      {c.minEffect > 0 ? `; minimum effect V ≥ ${c.minEffect}` : ""}; sparse tables: {c.sparse}
      {c.compare === "history" ? `; baseline: the previous ${c.historyWeeks} weeks` : ""}
      {c.categories ? `; categories: ${c.categories.join(", ")}` : ""}
      {c.shifts ? `; shifts: ${c.shifts.join(", ")}` : ""}.
    </p>
  );
}
