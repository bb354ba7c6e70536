import type { Metadata } from "next";
import { requirePageUser } from "@/lib/auth/guard";
import { comparisonsWithEpisodes, listEpisodes } from "@/lib/db/episodes";
import { loadMasterData } from "@/lib/db/plant";
import { liveSource } from "@/lib/episodes/live-source";
import { parseEpisodeFilter, filterQuery } from "@/lib/episodes/filter";
import { isOpenStatus } from "@/lib/episodes/status";
import { syncAllComparisons } from "@/lib/episodes/sync";
import { databaseTrouble } from "@/lib/db/errors";
import { logServerError } from "@/lib/http/errors";
import { namesFrom } from "@/lib/review/names";
import { EpisodeFilters } from "./episode-filters";
import { EpisodeTable } from "./episode-table";
import "./episodes.css";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Flagged periods" };

type Search = Promise<Record<string, string | string[] | undefined>>;

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
      <EpisodeFilters filter={filter} comparisons={comparisons} lines={plant.lines} categories={plant.categories} errors={errors} />
      <p aria-live="polite">
        {episodes.length === 0
          ? "No flagged periods match."
          : `${episodes.length} flagged ${episodes.length === 1 ? "period" : "periods"}, ${open} open.`}
      </p>
      {episodes.length > 0 && <EpisodeTable episodes={episodes} names={names} />}
    </>
  );
}
