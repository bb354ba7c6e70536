import { html, type Markup } from "@/lib/review/markup";
import type { WindowView } from "@/lib/review/window";

/**
 * Adjusted residuals as a diverging heatmap in a real table: each cell prints its signed
 * value, cells beyond the critical value carry ▲/▼, bold type and an outline, and a
 * legend explains the classes (colour is never the only cue). The cell's colour is its
 * class (heat-k0…heat-k8 in review.css, RdBu from lib/review/heatmap). Screen readers
 * hear the row and column headers and the value; beyond the critical value also what it
 * means. Built as markup (lib/review/markup): a 12 × 25 table is 300 cells.
 */
export function heatmapMarkup(view: WindowView): Markup {
  const kind = view.kind === "line" ? "lines" : view.kind === "shift" ? "shifts" : "periods";
  const head = view.columns.map((c) => html`<th scope="col" class="heat-col">${c.name}</th>`);
  const rows = view.rows.map((r, i) => {
    const cells = view.heat[i].map((h, j) => {
      // Most cells are just a coloured value; the few beyond the critical value (the
      // drivers) also say which cell they are, for links, tests and scripts.
      if (!h.beyond) return html`<td class="heat-k${h.index}">${h.printed}</td>`;
      // The marker is for the eye; the words after the value say the same to a screen reader.
      return html`<td class="heat-k${h.index} heat-beyond" data-row="${r.code}" data-category="${view.columns[j].code}" data-beyond="true"><span aria-hidden="true">${h.marker} </span>${h.printed}<span class="visually-hidden">${h.description.slice(h.printed.length)}</span></td>`;
    });
    return html`<tr><th scope="row">${r.name}</th>${cells}</tr>`;
  });
  const legend = view.legend.classes.map((c) => html`<li><span class="heat-swatch heat-k${c.index}" aria-hidden="true"></span>${c.label}</li>`);
  return html`<div class="table-scroll"><table class="data heat"><caption class="visually-hidden">Adjusted residuals of ${view.comparisonName}, ${view.range}: rows are ${kind}, columns are categories.</caption><thead><tr><th scope="col">Adjusted residual</th>${head}</tr></thead><tbody>${rows}</tbody></table></div><figcaption><ol class="heat-legend" aria-label="Colour key">${legend}</ol><p class="muted">Red: more defects than the table’s margins predict; blue: fewer. ${view.legend.note}</p></figcaption>`;
}
