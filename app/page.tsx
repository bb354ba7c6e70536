import Link from "next/link";
import { redirect } from "next/navigation";
import { currentUser, requirePageUser } from "@/lib/auth/guard";
import { addDays } from "@/lib/dates";
import { overviewData } from "@/lib/review/pages";
import { formatDay, formatP, formatRatio, formatSigned, formatV } from "@/lib/review/format";
import { builtOncePer } from "@/lib/review/kept";
import { html, type Markup } from "@/lib/review/markup";
import type { OverviewRow } from "@/lib/review/overview";
import { SoftLinks } from "./components/review/soft-links";
import { StateBadge, stateBadgeMarkup } from "./components/review/state-badge";
import { FreshnessNote } from "./components/review/freshness-note";
import { WarmUpRefresh } from "./components/review/warm-up-refresh";
import { warmUpText } from "@/lib/review/freshness";
import "./components/review/review.css";

export const dynamic = "force-dynamic";

/** Episodes that ended this recently are named on a quiet overview. */
const RECENT_DAYS = 56;

export default async function OverviewPage() {
  // Operators (and badge sessions) work on the floor: send them to their page instead of a refusal.
  const me = await currentUser();
  if (me && (me.role === "operator" || me.sessionKind === "badge")) redirect("/entry");
  await requirePageUser("engineer", { path: "/" });
  const data = await overviewData();
  const flagged = data.rows.filter((r) => r.state === "flagged");
  const recent = data.lastDate
    ? data.rows.filter((r) => r.state !== "flagged" && r.lastEpisode && r.lastEpisode.end >= addDays(data.lastDate!, -RECENT_DAYS))
    : [];
  return (
    <>
      <div className="page-head">
        <h1>Overview</h1>
        <p className="lede">
          Every saved comparison, as of its latest window
          {data.lastDateText ? <> (data up to {data.lastDateText})</> : null}:{" "}
          <strong>{data.counts.flagged} flagged</strong>, {data.counts.quiet} quiet, {data.counts.untestable} not testable
          {data.warmUp ? <>, {data.warmUp.waiting.length} still being computed</> : null}.
        </p>
      </div>
      <FreshnessNote freshness={data.freshness} />
      {data.warmUp ? (
        <div className="card warm-up" data-testid="warm-up">
          <p role="status">
            {data.warmUp.waiting.length === 1 ? "One comparison is" : `${data.warmUp.waiting.length} comparisons are`}{" "}
            {warmUpText(data.warmUp)}; they are left out below until their results are ready.
          </p>
          <p className="muted small">Still to come: {data.warmUp.waiting.join(", ")}.</p>
          <WarmUpRefresh href="/" />
        </div>
      ) : null}

      {flagged.length ? (
        <section aria-labelledby="open-heading">
          <h2 id="open-heading">Flagged now</h2>
          <ul className="wall-grid" role="list">
            {flagged.map((r) => (
              <li key={r.code} className="card wall-card" data-testid="flagged-card">
                <StateBadge state="flagged" large />
                <h3>
                  <Link href={`/comparisons/${encodeURIComponent(r.code)}`} prefetch={false}>
                    {r.name}
                  </Link>
                </h3>
                <p className="wall-since">
                  {r.flaggedDays} {r.flaggedDays === 1 ? "day" : "days"}, since {r.flaggedSince ? formatDay(r.flaggedSince) : "—"}
                </p>
                {r.topDriver ? (
                  <p>
                    Strongest cell: <strong>{r.topDriver.rowName}</strong> × <strong>{r.topDriver.categoryName}</strong>{" "}
                    <span className="num">
                      ({formatRatio(r.topDriver.ratio)}, {formatSigned(r.topDriver.adjustedResidual)})
                    </span>
                  </p>
                ) : null}
                <p className="wall-links">
                  {r.latest ? (
                    <Link href={`/comparisons/${encodeURIComponent(r.code)}/windows/${r.latest.start}`} prefetch={false}>
                      Latest window
                    </Link>
                  ) : null}
                  {r.openEpisode ? (
                    <Link href={`/comparisons/${encodeURIComponent(r.code)}/windows/${r.openEpisode.peakStart}`} prefetch={false}>
                      Strongest window of the episode
                    </Link>
                  ) : null}
                  <Link href={`/episodes?comparison=${encodeURIComponent(r.code)}`} prefetch={false}>
                    Flagged-period record
                  </Link>
                </p>
              </li>
            ))}
          </ul>
        </section>
      ) : (
        <div className="card quiet-note">
          <StateBadge state="quiet" large />
          <div>
            <p className="quiet-title">
              {data.warmUp
                ? `${data.warmUp.ready === 1 ? "The one comparison ready so far is not" : `None of the ${data.warmUp.ready} comparisons ready so far is`} flagged in its latest window; ${data.warmUp.waiting.length} still being computed.`
                : "No comparison is flagged in its latest window."}
            </p>
            {recent.length ? (
              <p className="muted">
                Flagged in the last {RECENT_DAYS} days:{" "}
                {recent.map((r, k) => (
                  <span key={r.code}>
                    {k ? "; " : ""}
                    <Link href={`/comparisons/${encodeURIComponent(r.code)}`} prefetch={false}>
                    {r.name}
                  </Link> ({r.lastEpisode!.range})
                  </span>
                ))}
                .
              </p>
            ) : null}
          </div>
        </div>
      )}

      <section aria-labelledby="all-heading">
        <h2 id="all-heading">All comparisons</h2>
        <SoftLinks className="table-scroll" html={overviewTable(data.rows)} />
        <p className="muted">
          Adj. p: the window&apos;s p-value adjusted across all windows of the comparison. V: bias-corrected Cramér&apos;s V, 0 for
          identical mixes.{" "}
          <Link href="/week" prefetch={false}>
            Weekly review
          </Link>
        </p>
      </section>
    </>
  );
}

/** The table of every comparison, built once per kept overview (lib/review/kept.ts). */
const overviewTable = builtOncePer((rows: readonly OverviewRow[]) => overviewMarkup(rows).html);

/** Every comparison's row as markup (lib/review/markup); its links navigate through SoftLinks. */
function overviewMarkup(rows: readonly OverviewRow[]): Markup {
  const body = rows.map((r) => {
    const href = `/comparisons/${encodeURIComponent(r.code)}`;
    const latest = r.latest
      ? html`<a href="${href}/windows/${r.latest.start}" class="nowrap-link">${r.latest.range}</a>${r.latest.reason ? html`<div class="muted small">${r.latest.reason}</div>` : ""}`
      : r.problem
        ? html`<span class="muted small">${r.problem}</span>`
        : html`<span class="muted">history shorter than one window</span>`;
    const flaggedFor =
      r.flaggedDays !== null
        ? `${r.flaggedDays} ${r.flaggedDays === 1 ? "day" : "days"}`
        : r.lastEpisode
          ? html`<span class="muted small">last: ${r.lastEpisode.range}</span>`
          : "—";
    const driver = r.topDriver
      ? html`${r.topDriver.rowName} × ${r.topDriver.categoryName} <span class="num">(${formatSigned(r.topDriver.adjustedResidual)})</span>`
      : "—";
    const rate = r.rateSignals.length
      ? html`<span class="rate-flag">Rate signal: ${r.rateSignals.join(", ")}</span>`
      : html`<span class="muted">within limits</span>`;
    return html`<tr data-comparison="${r.code}" data-state="${r.state}"><td>${stateBadgeMarkup(r.state)}</td><td><a href="${href}">${r.name}</a></td><td>${latest}</td><td class="num">${r.latest ? formatP(r.latest.adjustedPValue) : "—"}</td><td class="num">${r.latest ? formatV(r.latest.cramersV) : "—"}</td><td>${flaggedFor}</td><td>${driver}</td><td>${rate}</td><td class="num">${r.episodes}</td></tr>`;
  });
  return html`<table class="data overview-table"><thead><tr><th scope="col">State</th><th scope="col">Comparison</th><th scope="col">Latest window</th><th scope="col" class="num nowrap">Adj. p</th><th scope="col" class="num">V</th><th scope="col">Flagged for</th><th scope="col">Strongest cell</th><th scope="col">Defect rate</th><th scope="col" class="num">Episodes</th></tr></thead><tbody>${body}</tbody></table>`;
}
