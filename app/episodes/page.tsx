import type { Metadata } from "next";
import Link from "next/link";
import { requirePageUser } from "@/lib/auth/guard";
import { comparisonsWithEpisodes, listEpisodes, type EpisodeRecord } from "@/lib/db/episodes";
import { loadMasterData } from "@/lib/db/plant";
import { liveSource } from "@/lib/episodes/live-source";
import { parseEpisodeFilter, filterQuery } from "@/lib/episodes/filter";
import { EPISODE_STATUSES, STATUS_LABELS, isOpenStatus } from "@/lib/episodes/status";
import { syncAllComparisons } from "@/lib/episodes/sync";
import { databaseTrouble } from "@/lib/db/errors";
import { logServerError } from "@/lib/http/errors";
import { formatP, formatRange, formatSigned } from "@/lib/review/format";
import { namesFrom, type Names } from "@/lib/review/names";
import { StatusBadge } from "./status-badge";
import "./episodes.css";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Flagged periods" };

type Search = Promise<Record<string, string | string[] | undefined>>;

function driverText(e: EpisodeRecord, names: Names): string[] {
  const kind = e.comparison.compare === "shift" ? "shift" : e.comparison.compare === "history" ? "history" : "line";
  // Against its own past the baseline row mirrors the current one: show the current window's cells.
  const cells = kind === "history" ? e.drivers.filter((d) => d.row !== "baseline") : e.drivers;
  return cells.slice(0, 3).map((d) => `${names.row(kind, d.row)} · ${names.category(d.category)} (${formatSigned(d.adjustedResidual)})`);
}

function shownDrivers(e: EpisodeRecord): number {
  return e.comparison.compare === "history" ? e.drivers.filter((d) => d.row !== "baseline").length : e.drivers.length;
}

export default async function EpisodesPage({ searchParams }: { searchParams: Search }) {
  await requirePageUser("engineer", { path: "/episodes" });
  const params = await searchParams;
  const { filter, errors } = parseEpisodeFilter(params);
  let syncError: string | null = null;
  try {
    await syncAllComparisons(liveSource);
  } catch (error) {
    const trouble = databaseTrouble(error);
    syncError = trouble ? trouble.message : `The latest scan could not be read (reference ${logServerError(error, "episodes sync")}).`;
  }
  const [episodes, comparisons, plant] = await Promise.all([listEpisodes(filter), comparisonsWithEpisodes(), loadMasterData()]);
  const names = namesFrom(plant);
  const query = filterQuery(filter);
  const open = episodes.filter((e) => isOpenStatus(e.status)).length;
  return (
    <>
      <div className="page-head">
        <h1>Flagged periods</h1>
        <p className="episode-exports no-print">
          <a className="button secondary" href={`/episodes/export/csv${query}`} download>
            Download CSV
          </a>
          <a className="button secondary" href={`/episodes/export/json${query}`} download>
            Download JSON
          </a>
        </p>
      </div>
      <p className="lede">
        Every period in which a saved comparison flagged a change in the mix of defect categories, with its review: who owns it,
        what was found, and what was decided. A flagged period is a reason to look, not a finding.
      </p>
      {syncError && (
        <p className="caution" role="alert">
          {syncError} The list shows the records as last synced.
        </p>
      )}
      <form className="card episode-filters no-print" method="get" aria-label="Filter flagged periods">
        <div className="form-row">
          <div className="field">
            <label htmlFor="f-status">Status</label>
            <select id="f-status" name="status" defaultValue={filter.status ?? ""}>
              <option value="">All</option>
              <option value="open">Open (new or under investigation)</option>
              {EPISODE_STATUSES.map((s) => (
                <option key={s} value={s}>
                  {STATUS_LABELS[s]}
                </option>
              ))}
            </select>
          </div>
          <div className="field">
            <label htmlFor="f-comparison">Comparison</label>
            <select id="f-comparison" name="comparison" defaultValue={filter.comparison ?? ""}>
              <option value="">All</option>
              {comparisons.map((c) => (
                <option key={c.code} value={c.code}>
                  {c.name}
                </option>
              ))}
            </select>
          </div>
          <div className="field">
            <label htmlFor="f-line">Line</label>
            <select id="f-line" name="line" defaultValue={filter.line ?? ""}>
              <option value="">All</option>
              {plant.lines.map((l) => (
                <option key={l.code} value={l.code}>
                  {l.name}
                </option>
              ))}
            </select>
          </div>
          <div className="field">
            <label htmlFor="f-category">Category</label>
            <select id="f-category" name="category" defaultValue={filter.category ?? ""}>
              <option value="">All</option>
              {plant.categories.map((c) => (
                <option key={c.code} value={c.code}>
                  {c.name}
                </option>
              ))}
            </select>
          </div>
          <div className="field">
            <label htmlFor="f-from">From</label>
            <input id="f-from" name="from" type="date" defaultValue={filter.from ?? ""} />
          </div>
          <div className="field">
            <label htmlFor="f-to">To</label>
            <input id="f-to" name="to" type="date" defaultValue={filter.to ?? ""} />
          </div>
          <div className="field">
            <button type="submit">Show</button>
          </div>
          <div className="field">
            <Link className="button secondary" href="/episodes">
              Clear
            </Link>
          </div>
        </div>
        {errors.length > 0 && (
          <p className="error-text" role="alert">
            {errors.join(" ")}
          </p>
        )}
      </form>
      <p aria-live="polite">
        {episodes.length === 0
          ? "No flagged periods match."
          : `${episodes.length} flagged ${episodes.length === 1 ? "period" : "periods"}, ${open} open.`}
      </p>
      {episodes.length > 0 && (
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
                <tr key={e.id} data-episode={e.id}>
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
                    {driverText(e, names).map((t) => (
                      <div key={t}>{t}</div>
                    ))}
                    {shownDrivers(e) > 3 && <div className="muted small">and {shownDrivers(e) - 3} more</div>}
                  </td>
                  <td className="num">{formatP(e.minAdjustedP)}</td>
                  <td>
                    <StatusBadge status={e.status} />
                  </td>
                  <td>{e.owner?.name ?? <span className="muted">—</span>}</td>
                  <td>{e.actionRefs ?? <span className="muted">—</span>}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </>
  );
}
