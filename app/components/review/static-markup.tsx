import type { Markup } from "@/lib/review/markup";

type Tag = "div" | "figure" | "section";

/**
 * Inserts markup built with lib/review/markup's `html` (escaped by construction) as the
 * content of one element. React neither renders nor hydrates the nodes inside, which is
 * the point: they are static tables and charts. Links inside are plain <a> elements;
 * wrap the element in <SoftLinks> to keep client-side navigation.
 */
export function StaticMarkup({
  markup,
  as: As = "div",
  ...props
}: { markup: Markup; as?: Tag; className?: string; id?: string; "data-testid"?: string; "data-chart"?: string; "aria-labelledby"?: string }) {
  return <As {...props} dangerouslySetInnerHTML={{ __html: markup.html }} />;
}
