import { formatExpected, formatNumber } from "@/lib/review/format";
import { html, type Markup } from "@/lib/review/markup";
import type { WindowView } from "@/lib/review/window";

/**
 * Observed counts with the expected count under each, row and column totals; cells
 * whose adjusted residual is beyond the critical value in bold. The note the table is
 * described by (id counts-note) says what the two numbers in a cell are, once for the
 * whole table. Built as markup (lib/review/markup): a 12 × 25 table is 300 cells.
 */
export function countsMarkup(view: WindowView): Markup {
  const head = view.columns.map((c) => html`<th scope="col" class="num">${c.name}</th>`);
  const rows = view.rows.map((r, i) => {
    const cells = view.columns.map(
      (_, j) =>
        html`<td${view.heat[i][j].beyond ? html` class="cell-beyond"` : ""}>${formatNumber(view.observed[i][j])}<span class="exp">${formatExpected(view.expected[i][j])}</span></td>`,
    );
    return html`<tr><th scope="row">${r.name}</th>${cells}<td>${formatNumber(r.total)}</td></tr>`;
  });
  const totals = view.columns.map((c) => html`<td>${formatNumber(c.total)}</td>`);
  // Every data cell is a number: alignment and figures come from table.counts td in review.css, not a class per cell.
  return html`<table class="data counts" data-testid="counts" aria-describedby="counts-note"><thead><tr><th scope="col">Observed / expected</th>${head}<th scope="col" class="num">Total</th></tr></thead><tbody>${rows}<tr><th scope="row">Total</th>${totals}<td>${formatNumber(view.stats.n)}</td></tr></tbody></table>`;
}
