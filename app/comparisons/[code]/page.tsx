import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { requirePageUser } from "@/lib/auth/guard";
import { formatNumber, formatP, formatRange, formatSigned, formatV } from "@/lib/review/format";
import { builtOncePer } from "@/lib/review/kept";
import { html, type Markup } from "@/lib/review/markup";
import { kindLabel } from "@/lib/review/names";
import { stateOf } from "@/lib/review/overview";
import { timelineData } from "@/lib/review/pages";
import type { ScanWindow } from "@/lib/monitor/types";
import { RateChart } from "../../components/charts/rate-chart";
import { TimelineChart } from "../../components/charts/timeline-chart";
import { rateFirstPaint, timelineFirstPaint } from "../../components/charts/timeline-frame";
import { rateSeriesOf, timelineSeries } from "../../components/charts/timeline-series";
import { SoftLinks } from "../../components/review/soft-links";
import { StateBadge, stateBadgeMarkup } from "../../components/review/state-badge";
import { SettingsSummary } from "../../components/review/settings-summary";
import { FreshnessNote } from "../../components/review/freshness-note";
import "../../components/review/review.css";

export const dynamic = "force-dynamic";

type Params = { params: Promise<{ code: string }>; searchParams: Promise<{ rate?: string | string[]; all?: string | string[] }> };

export async function generateMetadata({ params }: Params): Promise<Metadata> {
  const { code } = await params;
  return { title: `Timeline ${decodeURIComponent(code)}` };
}

const one = (v: string | string[] | undefined) => (Array.isArray(v) ? v[0] : v);

type Data = NonNullable<Awaited<ReturnType<typeof timelineData>>>["kept"];

/** What the charts and window lists draw, built once per kept timeline (lib/review/kept.ts). */
const drawn = builtOncePer((data: Data) => {
  const { timeline } = data;
  const base = `/comparisons/${encodeURIComponent(data.comparison.code)}`;
  const series = timeline.points.length ? timelineSeries(timeline) : null;
  const rate = timeline.rate ? rateSeriesOf(timeline.rate.points, timeline.ticks, [timeline.xMin, timeline.xMax]) : null;
  const rateGroup = timeline.rate?.groups.find((g) => g.code === timeline.rate!.selected);
  const paint = series ? timelineFirstPaint(series, timeline.summary) : null;
  return {
    series,
    firstPaint: paint ? { evidence: paint.evidence.html, effect: paint.effect.html } : { evidence: "", effect: "" },
    rate,
    rateFirstPaint: rate ? rateFirstPaint(rate, `Defects per unit, ${rateGroup?.name ?? timeline.rate!.selected}, with u-chart limits`).html : "",
    recent: windowTable(data.recent, base).html,
    flagged: windowTable([...data.flagged].reverse(), base).html,
  };
});

/** Every window, newest first (?all=1), built once per kept timeline. */
const allWindows = builtOncePer((data: Data) => windowTable([...data.windows].reverse(), `/comparisons/${encodeURIComponent(data.comparison.code)}`).html);

export default async function TimelinePage({ params, searchParams }: Params) {
  const { code: raw } = await params;
  const sp = await searchParams;
  const showAll = one(sp.all) === "1";
  const code = decodeURIComponent(raw);
  await requirePageUser("engineer", { path: `/comparisons/${raw}` });
  const data = await timelineData(code, one(sp.rate) ?? null);
  if (!data) notFound();
  const { comparison: c, timeline, episodes, names } = data;
  const latest = data.windows.at(-1);
  const base = `/comparisons/${encodeURIComponent(c.code)}`;
  const rowName = (r: string) => names.row(c.compare, r, c.historyWeeks);
  const { series, firstPaint, rate, rateFirstPaint: ratePaint, recent, flagged } = drawn(data.kept);
  return (
    <>
      <p className="crumbs">
        <Link href="/" prefetch={false}>
          Overview
        </Link>{" "}
        / {c.name}
      </p>
      <div className="page-head">
        <h1>{c.name}</h1>
        <p>
          <Link href={`${base}/settings`} className="button secondary" prefetch={false}>
            Settings
          </Link>
        </p>
      </div>
      <FreshnessNote freshness={data.freshness} />
      {data.problem ? (
        <p className="card problem-note" data-testid="problem">
          Not testable: {data.problem}
        </p>
      ) : null}
      <p className="lede">
        {kindLabel(c.compare, c.lines, names)}. Now: <StateBadge state={stateOf(latest)} />{" "}
        {latest ? (
          <>
            latest window{" "}
            <Link href={`${base}/windows/${latest.start}`} prefetch={false}>
              {formatRange(latest.start, latest.end)}
            </Link>
            , adjusted p{" "}
            {formatP(latest.adjustedPValue)}, V {formatV(latest.cramersVCorrected)}.
          </>
        ) : data.problem ? (
          "no window (see above)."
        ) : (
          "no window yet."
        )}
      </p>
      <SettingsSummary comparison={c} />

      <figure className="chart-card" aria-labelledby="evidence-heading">
        <h2 id="evidence-heading">Evidence and effect size, window by window</h2>
        {series ? <TimelineChart code={c.code} series={series} firstPaint={firstPaint} /> : <p>No windows yet.</p>}
        <figcaption>
          <span className="key-line" aria-hidden="true" /> −log₁₀ of the adjusted p (higher is stronger evidence; p below 10⁻⁵⁰ is drawn at the top) ·{" "}
          <span className="key-dash" aria-hidden="true" /> the α line: a window above it flags ·{" "}
          <span className="key-diamond" aria-hidden="true" /> flagged window · <span className="key-band" aria-hidden="true" /> episode. Lower panel:
          bias-corrected Cramér&apos;s V. Each point sits at the window&apos;s last day; click one to open it. {timeline.summary}
        </figcaption>
      </figure>

      {timeline.rate && rate ? (
        <figure className="chart-card" aria-labelledby="rate-heading">
          <h2 id="rate-heading">Defects per unit, group by group</h2>
          <RateChart
            groups={timeline.rate.groups}
            selected={timeline.rate.selected}
            series={rate}
            firstPaint={ratePaint}
          />
          <figcaption>
            The mix test above says nothing about the rate. Here each group&apos;s defects per unit over the same windows, with u-chart limits
            around the window&apos;s pooled rate of all compared groups. Windows with a rate signal (rate test flagged, group outside its limits):{" "}
            {timeline.rate.groups.map((g) => `${g.name}: ${g.signals}`).join("; ")}.
          </figcaption>
        </figure>
      ) : null}

      <section aria-labelledby="episodes-heading">
        <h2 id="episodes-heading">Episodes</h2>
        {episodes.length ? (
          <div className="table-scroll">
            <table className="data">
              <thead>
                <tr>
                  <th scope="col">Period</th>
                  <th scope="col" className="num">Flagged windows</th>
                  <th scope="col">Strongest window</th>
                  <th scope="col" className="num">Adj. p</th>
                  <th scope="col">Driving cells</th>
                  <th scope="col">Record</th>
                </tr>
              </thead>
              <tbody>
                {episodes.map((e) => (
                  <tr key={e.start} data-episode={e.start}>
                    <td>{formatRange(e.start, e.end)}</td>
                    <td className="num">{e.windows}</td>
                    <td>
                      <Link href={`${base}/windows/${e.peak.start}`} prefetch={false}>
                        {formatRange(e.peak.start, e.peak.end)}
                      </Link>
                    </td>
                    <td className="num">{formatP(e.peak.adjustedPValue)}</td>
                    <td>
                      {e.drivers.slice(0, 3).map((d) => (
                        <div key={`${d.row}|${d.category}`}>
                          {rowName(d.row)} × {names.category(d.category)} ({formatSigned(d.adjustedResidual)}, in {d.windows} windows)
                        </div>
                      ))}
                    </td>
                    <td>
                      <Link href={data.episodeHrefs.get(e.start) ?? `/episodes?comparison=${encodeURIComponent(c.code)}`} prefetch={false}>
                        Flagged-period record
                      </Link>
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ) : (
          <p>No episode in the scanned history.</p>
        )}
      </section>

      <section aria-labelledby="windows-heading">
        <h2 id="windows-heading">Windows</h2>
        <h3>Latest 14</h3>
        <SoftLinks className="table-scroll" html={recent} />
        {data.flagged.length ? (
          <>
            <h3>Flagged ({data.flagged.length})</h3>
            <SoftLinks className="table-scroll" html={flagged} />
          </>
        ) : null}
        {showAll ? (
          <>
            <h3>All {data.windows.length} windows, newest first</h3>
            <SoftLinks className="table-scroll" html={allWindows(data.kept)} />
          </>
        ) : (
          <p>
            <Link href={`${base}?all=1#windows-heading`} prefetch={false}>
              Show all {data.windows.length} windows
            </Link>
          </p>
        )}
      </section>
    </>
  );
}

/** The window list as markup (lib/review/markup): with ?all=1 it holds every window of the scan. */
function windowTable(windows: readonly ScanWindow[], base: string): Markup {
  const rows = windows.map(
    (w) =>
      html`<tr${w.flagged ? html` class="row-flagged"` : ""}><td><a href="${base}/windows/${w.start}">${formatRange(w.start, w.end)}</a></td><td>${stateBadgeMarkup(stateOf(w))}</td><td class="num">${formatNumber(w.n)}</td><td class="num">${w.chiSquare === null ? "—" : w.chiSquare.toFixed(1)}</td><td class="num">${w.df ?? "—"}</td><td class="num">${formatP(w.pValue)}</td><td class="num">${formatP(w.adjustedPValue)}</td><td class="num">${formatV(w.cramersVCorrected)}</td></tr>`,
  );
  return html`<table class="data"><thead><tr><th scope="col">Window</th><th scope="col">State</th><th scope="col" class="num">Defects</th><th scope="col" class="num">X²</th><th scope="col" class="num">df</th><th scope="col" class="num">p</th><th scope="col" class="num">Adj. p</th><th scope="col" class="num">V</th></tr></thead><tbody>${rows}</tbody></table>`;
}
