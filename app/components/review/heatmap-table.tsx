import type { WindowView } from "@/lib/review/window";

/**
 * Adjusted residuals as a diverging heatmap in a real table: each cell prints its signed
 * value, cells beyond the critical value carry ▲/▼ and bold type, and a legend explains
 * the classes. Screen readers get the full description of each cell.
 */
export function HeatmapTable({ view }: { view: WindowView }) {
  return (
    <figure className="heatmap" data-testid="heatmap">
      <div className="table-scroll">
        <table className="data heat">
          <caption className="visually-hidden">
            Adjusted residuals of {view.comparisonName}, {view.range}: rows are {view.kind === "line" ? "lines" : view.kind === "shift" ? "shifts" : "periods"}, columns are categories.
          </caption>
          <thead>
            <tr>
              <th scope="col">Adjusted residual</th>
              {view.columns.map((c) => (
                <th scope="col" key={c.code} className="heat-col">
                  {c.name}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {view.rows.map((r, i) => (
              <tr key={r.code}>
                <th scope="row">{r.name}</th>
                {view.heat[i].map((h, j) => (
                  <td
                    key={view.columns[j].code}
                    className={`heat-cell${h.beyond ? " heat-beyond" : ""}`}
                    style={{ background: h.fill, color: h.text }}
                    data-row={r.code}
                    data-category={view.columns[j].code}
                    data-beyond={h.beyond ? "true" : undefined}
                    title={`${r.name} × ${view.columns[j].name}: ${h.description}`}
                  >
                    <span aria-hidden="true">{h.marker ? `${h.marker} ${h.printed}` : h.printed}</span>
                    <span className="visually-hidden">{h.description}</span>
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <figcaption>
        <ol className="heat-legend" aria-label="Colour key">
          {view.legend.classes.map((c) => (
            <li key={c.label}>
              <span className="heat-swatch" style={{ background: c.fill }} aria-hidden="true" />
              {c.label}
            </li>
          ))}
        </ol>
        <p className="muted">
          Red: more defects than the table&apos;s margins predict; blue: fewer. {view.legend.note}
        </p>
      </figcaption>
    </figure>
  );
}
