import Link from "next/link";
import type { EpisodeRecord } from "@/lib/db/episodes";
import { formatP, formatRange, formatSigned } from "@/lib/review/format";
import type { Names } from "@/lib/review/names";
import { StatusBadge } from "./status-badge";

function kindOf(e: EpisodeRecord): "line" | "shift" | "history" {
  return e.comparison.compare === "shift" ? "shift" : e.comparison.compare === "history" ? "history" : "line";
}

/** Against its own past the baseline row mirrors the current one: the current window's cells only. */
function shownCells(e: EpisodeRecord): EpisodeRecord["drivers"] {
  return kindOf(e) === "history" ? e.drivers.filter((d) => d.row !== "baseline") : e.drivers;
}

function EpisodeRow({ e, names }: { e: EpisodeRecord; names: Names }) {
  const cells = shownCells(e);
  return (
    <tr data-episode={e.id}>
      <td>
        <Link href={`/episodes/${e.id}`} aria-label={`Flagged period ${e.id}`}>
          #{e.id}
        </Link>
      </td>
      <td>{e.comparison.name}</td>
      <td>
        <Link href={`/episodes/${e.id}`}>{formatRange(e.start, e.end)}</Link>
        <br />
        <span className="muted small">
          {e.windows} {e.windows === 1 ? "window" : "windows"}
        </span>
        {e.goneAt && (
          <>
            <br />
            <span className="episode-gone">no longer found</span>
          </>
        )}
      </td>
      <td>
        {cells.slice(0, 3).map((d) => {
          const text = `${names.row(kindOf(e), d.row)} · ${names.category(d.category)} (${formatSigned(d.adjustedResidual)})`;
          return <div key={text}>{text}</div>;
        })}
        {cells.length > 3 && <div className="muted small">and {cells.length - 3} more</div>}
      </td>
      <td className="num">{formatP(e.minAdjustedP)}</td>
      <td>
        <StatusBadge status={e.status} />
      </td>
      <td>{e.owner?.name ?? <span className="muted">—</span>}</td>
      <td>{e.actionRefs ?? <span className="muted">—</span>}</td>
    </tr>
  );
}

/** The list of flagged periods, newest first: one row each, its first three driver cells. */
export function EpisodeTable({ episodes, names }: { episodes: EpisodeRecord[]; names: Names }) {
  return (
    <div className="table-scroll">
      <table className="data episode-table">
        <caption className="visually-hidden">Flagged periods, newest first</caption>
        <thead>
          <tr>
            <th scope="col">#</th>
            <th scope="col">Comparison</th>
            <th scope="col">Period</th>
            <th scope="col">Drivers</th>
            <th scope="col" className="num">
              Smallest adj. p
            </th>
            <th scope="col">Status</th>
            <th scope="col">Owner</th>
            <th scope="col">Action refs</th>
          </tr>
        </thead>
        <tbody>
          {episodes.map((e) => (
            <EpisodeRow key={e.id} e={e} names={names} />
          ))}
        </tbody>
      </table>
    </div>
  );
}
