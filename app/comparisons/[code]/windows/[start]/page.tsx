import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { requirePageUser } from "@/lib/auth/guard";
import { isIsoDate } from "@/lib/dates";
import { formatNumber, formatP, formatPercent, formatRange, formatV } from "@/lib/review/format";
import { builtOncePer } from "@/lib/review/kept";
import { html } from "@/lib/review/markup";
import { windowData } from "@/lib/review/pages";
import type { WindowView } from "@/lib/review/window";
import { contributionSvg } from "../../../../components/charts/contribution-svg";
import { mixLegend, mixSvg } from "../../../../components/charts/mix-svg";
import { paretoFigures } from "../../../../components/charts/pareto-svg";
import { countsMarkup } from "../../../../components/review/counts-table";
import { heatmapMarkup } from "../../../../components/review/heatmap-table";
import { StaticMarkup } from "../../../../components/review/static-markup";
import { ReadingBlock } from "../../../../components/review/reading-block";
import { SettingsSummary } from "../../../../components/review/settings-summary";
import { StateBadge } from "../../../../components/review/state-badge";
import { FreshnessNote } from "../../../../components/review/freshness-note";
import "../../../../components/review/review.css";

export const dynamic = "force-dynamic";

type Params = { params: Promise<{ code: string; start: string }> };

export async function generateMetadata({ params }: Params): Promise<Metadata> {
  const { code, start } = await params;
  return { title: `Window ${start} · ${decodeURIComponent(code)}` };
}

export default async function WindowPage({ params }: Params) {
  const { code: raw, start } = await params;
  const code = decodeURIComponent(raw);
  await requirePageUser("engineer", { path: `/comparisons/${raw}/windows/${start}` });
  if (!isIsoDate(start)) notFound();
  const data = await windowData(code, start);
  if (!data) notFound();
  const c = data.comparison;
  const base = `/comparisons/${encodeURIComponent(c.code)}`;
  const w = data.window;
  if (!w) {
    return (
      <>
        <p className="crumbs">
          <Link prefetch={false} href="/">Overview</Link> / <Link prefetch={false} href={base}>{c.name}</Link>
        </p>
        <h1>No window starts on {start}</h1>
        <FreshnessNote freshness={data.freshness} />
        {data.problem ? (
          <p className="card problem-note" data-testid="problem">
            Not testable: {data.problem}
          </p>
        ) : null}
        <p>
          The scan of this comparison has no window starting that day. <Link prefetch={false} href={base}>Back to the timeline</Link>.
        </p>
      </>
    );
  }
  const view = data.view;
  const nav = (
    <nav className="window-nav" aria-label="Windows">
      {data.neighbours?.previous ? <Link prefetch={false} href={`${base}/windows/${data.neighbours.previous}`}>← Previous window</Link> : null}
      {data.neighbours?.next ? <Link prefetch={false} href={`${base}/windows/${data.neighbours.next}`}>Next window →</Link> : null}
      <Link prefetch={false} href={base}>Timeline</Link>
      {data.episode ? (
        <Link prefetch={false} href={data.episode.href}>Episode {formatRange(data.episode.start, data.episode.end)}: record</Link>
      ) : null}
    </nav>
  );
  return (
    <>
      <p className="crumbs">
        <Link prefetch={false} href="/">Overview</Link> / <Link prefetch={false} href={base}>{c.name}</Link> / {formatRange(w.start, w.end)}
      </p>
      <div className="page-head">
        <h1>
          {c.name}: {formatRange(w.start, w.end)}
        </h1>
        <StateBadge state={!w.testable ? "untestable" : w.flagged ? "flagged" : "quiet"} large />
      </div>
      <FreshnessNote freshness={data.freshness} />
      {nav}
      <SettingsSummary comparison={c} />
      {view ? (
        <WindowBody view={view} />
      ) : (
        <section className="card">
          <h2>Not testable</h2>
          <p>{w.reason ?? "Too few counts in this window."}</p>
          <p className="muted">{formatNumber(w.n)} defects were recorded in the window.</p>
        </section>
      )}
    </>
  );
}

/** The screen's tables and charts as markup, built once per kept view (lib/review/kept.ts). */
const staticParts = builtOncePer((view: WindowView) => ({
  heatmap: heatmapMarkup(view),
  counts: countsMarkup(view),
  contribution: contributionSvg(view.contributions, "Share of the chi-square carried by each cell, largest first"),
  mix: html`${mixSvg(view.mix.series, view.mix.bars, "Mix of defect categories per group, percent of the group's defects")}${mixLegend(view.mix.series)}`,
  pareto: paretoFigures(view.pareto),
}));

function WindowBody({ view }: { view: WindowView }) {
  const s = view.stats;
  const parts = staticParts(view);
  return (
    <>
      {view.baselineRange ? (
        <p>
          This window is compared with the line&apos;s previous weeks: <strong>{view.baselineRange}</strong>.
        </p>
      ) : null}
      <ReadingBlock reading={view.reading} />

      <section aria-labelledby="heat-heading">
        <h2 id="heat-heading">Where the mix differs: adjusted residuals</h2>
        <StaticMarkup as="figure" className="heatmap" data-testid="heatmap" markup={parts.heatmap} />
      </section>

      <section aria-labelledby="counts-heading">
        <h2 id="counts-heading">Observed and expected counts</h2>
        <p className="muted small" id="counts-note">
          Each cell: the observed count, and below it the count expected if every row had the table&apos;s overall mix.
        </p>
        <StaticMarkup className="table-scroll" markup={parts.counts} />
      </section>

      <div className="two-col">
        <figure className="chart-card" aria-labelledby="contrib-heading">
          <h2 id="contrib-heading">Which cells carry the chi-square</h2>
          <StaticMarkup data-chart="contribution" markup={parts.contribution} />
          <figcaption>
            ▲ solid: more than expected; ▼ outlined: fewer; faded: within ±{view.critical.toFixed(2)}.{" "}
            {view.contributions
              .slice(0, 5)
              .map((b) => `${b.label} ${formatPercent(b.share)}`)
              .join("; ")}
            .
          </figcaption>
        </figure>
        <figure className="chart-card" aria-labelledby="mix-heading">
          <h2 id="mix-heading">Each group&apos;s mix</h2>
          <StaticMarkup data-chart="mix" markup={parts.mix} />
          <figcaption>Percent of each group&apos;s defects by category (printed where the segment is wide enough); the counts are in the table above.</figcaption>
        </figure>
      </div>

      <section aria-labelledby="pareto-heading">
        <h2 id="pareto-heading">Pareto chart per group</h2>
        <StaticMarkup className="pareto-grid" markup={parts.pareto} />
      </section>

      <div className="two-col">
        <section className="card" aria-labelledby="method-heading">
          <h2 id="method-heading">Method and test</h2>
          <dl className="facts" data-testid="method">
            <dt>Method</dt>
            <dd>{s.methodNote}</dd>
            <dt>Pooled</dt>
            <dd>
              {s.pooled.length ? (
                <>
                  {s.pooled.map((p) => `${p.label}: ${p.members.join(", ")}`).join("; ")}. {s.pooledWhy}
                </>
              ) : (
                "nothing"
              )}
            </dd>
            {s.dropped.groups.length || s.dropped.categories.length ? (
              <>
                <dt>Left out</dt>
                <dd>
                  No defects in the window: {[...s.dropped.groups, ...s.dropped.categories].join(", ")}.
                </dd>
              </>
            ) : null}
            <dt>Expected counts</dt>
            <dd>
              smallest {s.expected.minExpected.toFixed(1)}; {formatPercent(s.expected.fractionBelow5)} of cells below 5, {s.expected.cellsBelow1} below 1 —
              Cochran&apos;s rule {s.expected.cochran ? "holds" : "fails"}
            </dd>
            <dt>Degrees of freedom</dt>
            <dd>{s.df}</dd>
            <dt>Pearson X²</dt>
            <dd className="mono">{s.chiSquare.toFixed(2)}</dd>
            <dt>Likelihood-ratio G²</dt>
            <dd className="mono">{s.gSquare.toFixed(2)}</dd>
            <dt>p</dt>
            <dd>
              {formatP(s.pValue)}
              {s.method !== "asymptotic" ? ` (the chi-square approximation would give ${formatP(s.asymptoticP)})` : ""}
            </dd>
            <dt>Adjusted p</dt>
            <dd>
              {formatP(s.adjustedPValue)} ({s.adjust === "bh" ? "Benjamini–Hochberg" : s.adjust === "bonferroni" ? "Bonferroni" : "not adjusted"} across the
              comparison&apos;s windows; flags at ≤ {s.alpha})
            </dd>
            <dt>Cramér&apos;s V</dt>
            <dd>{formatV(s.cramersV)} (bias-corrected)</dd>
            <dt>Defects</dt>
            <dd>{formatNumber(s.n)}</dd>
          </dl>
        </section>
        <section className="card" aria-labelledby="rate-heading">
          <h2 id="rate-heading">Defects per unit</h2>
          <table className="data">
            <thead>
              <tr>
                <th scope="col">Group</th>
                <th scope="col" className="num">Defects</th>
                <th scope="col" className="num">Units inspected</th>
                <th scope="col" className="num">Defects per unit</th>
              </tr>
            </thead>
            <tbody>
              {view.rates.map((r) => (
                <tr key={r.row}>
                  <th scope="row">{r.name}</th>
                  <td className="num">{formatNumber(r.defects)}</td>
                  <td className="num">{r.units === null ? "—" : formatNumber(r.units)}</td>
                  <td className="num">{r.dpu === null ? "—" : r.dpu.toFixed(5)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      </div>
    </>
  );
}
