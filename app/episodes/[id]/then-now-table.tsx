import type { ReactNode } from "react";

export type ThenNowRow = {
  key: string;
  label: ReactNode;
  then: ReactNode;
  now: ReactNode;
  changed: boolean;
  /** data-* attributes for the row (the browser tests find measures and cells by them). */
  data?: Record<`data-${string}`, string>;
};

/**
 * A snapshot against the live analysis: one row per measure or cell, its value then and
 * now, and "changed" where they differ. Used for the period's measures and its cells.
 */
export function ThenNowTable({ heading, caption, rows }: { heading: string; caption?: string; rows: ThenNowRow[] }) {
  return (
    <div className="table-scroll">
      <table className="data episode-diff">
        {caption && <caption>{caption}</caption>}
        <thead>
          <tr>
            <th scope="col">{heading}</th>
            <th scope="col" className="num">
              Then
            </th>
            <th scope="col" className="num">
              Now
            </th>
            <th scope="col">
              <span className="visually-hidden">Changed?</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => (
            <tr key={r.key} className={r.changed ? "episode-row-changed" : undefined} {...r.data}>
              <th scope="row">{r.label}</th>
              <td className="num">{r.then}</td>
              <td className="num">{r.now}</td>
              <td>{r.changed && <span className="episode-changed">changed</span>}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
