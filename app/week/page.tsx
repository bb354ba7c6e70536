import type { Metadata } from "next";
import Link from "next/link";
import { requirePageUser } from "@/lib/auth/guard";
import { formatDay, formatNumber, formatP, formatPercent, formatRatio, formatSigned, formatV } from "@/lib/review/format";
import { weekData } from "@/lib/review/pages";
import type { WeekTest } from "@/lib/review/week";
import { PrintButton } from "../components/review/print-button";
import "../components/review/review.css";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Weekly review" };

type Search = { searchParams: Promise<{ week?: string | string[] }> };

function TestCell({ t }: { t: WeekTest }) {
  if (!t.testable) return <span className="muted">not testable: {t.reason}</span>;
  return (
    <>
      p {formatP(t.pValue)}, V {formatV(t.cramersV)}
      {t.cochran === false ? <span className="muted"> (approximate)</span> : null}
    </>
  );
}

function pp(change: number | null): string {
  if (change === null) return "—";
  const points = change * 100;
  return `${formatSigned(points, 1)} pts`;
}

export default async function WeekPage({ searchParams }: Search) {
  const sp = await searchParams;
  const label = Array.isArray(sp.week) ? sp.week[0] : sp.week;
  await requirePageUser("engineer", { path: label ? `/week?week=${encodeURIComponent(label)}` : "/week" });
  const data = await weekData(label);
  const r = data.review;
  return (
    <div className="week-page">
      <div className="page-head">
        <h1>
          Weekly review {r.week.label} <span className="muted small">({r.range})</span>
        </h1>
        <form className="week-picker no-print" action="/week" method="get">
          <div className="field">
            <label htmlFor="week">ISO week</label>
            <input id="week" name="week" defaultValue={r.week.label} pattern="\d{4}-W\d{2}" placeholder="2026-W47" aria-describedby="week-hint" size={10} />
          </div>
          <button type="submit">Show</button>
          <PrintButton />
          <Link prefetch={false} href={`/week?week=${r.previousWeek.label}`}>← {r.previousWeek.label}</Link>
          <Link prefetch={false} href={`/week?week=${data.next.label}`}>{data.next.label} →</Link>
          <span id="week-hint" className="muted small">
            Format YYYY-Www; default {data.defaultWeek}, the last complete week.
          </span>
        </form>
      </div>
      {data.invalidLabel ? (
        <p className="form-message error" role="alert">
          “{data.invalidLabel}” is not an ISO week; showing {r.week.label}.
        </p>
      ) : null}
      {data.isFuture ? <p className="caution">This week has not ended yet; its counts are incomplete.</p> : null}
      <p className="print-only muted">
        Printed from Linemix. Data up to {data.lastDate ? formatDay(data.lastDate) : "—"}.
      </p>

      <section className="card" aria-labelledby="summary-heading">
        <h2 id="summary-heading">Lines compared</h2>
        <ul className="reading-list week-summary" data-testid="week-summary">
          {r.summary.map((s) => (
            <li key={s}>{s}</li>
          ))}
        </ul>
        <table className="data">
          <thead>
            <tr>
              <th scope="col">Week</th>
              <th scope="col" className="num">Defects</th>
              <th scope="col" className="num">X²</th>
              <th scope="col" className="num">df</th>
              <th scope="col" className="num">p</th>
              <th scope="col" className="num">V</th>
            </tr>
          </thead>
          <tbody>
            {[
              { label: `${r.week.label} (this week)`, t: r.current },
              { label: `${r.previousWeek.label} (week before)`, t: r.previous },
            ].map(({ label: l, t }) => (
              <tr key={l}>
                <th scope="row">{l}</th>
                <td className="num">{formatNumber(t.n)}</td>
                <td className="num">{t.chiSquare === null ? "—" : t.chiSquare.toFixed(1)}</td>
                <td className="num">{t.df ?? "—"}</td>
                <td className="num">{formatP(t.pValue)}</td>
                <td className="num">{formatV(t.cramersV)}</td>
              </tr>
            ))}
            <tr>
              <th scope="row">Change</th>
              <td className="num">{formatSigned(r.current.n - r.previous.n, 0)}</td>
              <td />
              <td />
              <td />
              <td className="num">
                {r.deltaV === null ? "—" : <span className={r.deltaV > 0 ? "delta-up" : "delta-down"}>{formatSigned(r.deltaV, 3)}</span>}
              </td>
            </tr>
          </tbody>
        </table>
      </section>

      <section aria-labelledby="drivers-heading">
        <h2 id="drivers-heading">Top drivers this week</h2>
        {r.drivers.length ? (
          <table className="data" data-testid="week-drivers">
            <thead>
              <tr>
                <th scope="col">Line × category</th>
                <th scope="col" className="num">Observed</th>
                <th scope="col" className="num">Expected</th>
                <th scope="col" className="num">Ratio</th>
                <th scope="col" className="num">Adj. residual</th>
                <th scope="col" className="num">Share of X²</th>
                <th scope="col">Week before</th>
              </tr>
            </thead>
            <tbody>
              {r.drivers.slice(0, 10).map((d) => (
                <tr key={`${d.row}|${d.category}`}>
                  <th scope="row">
                    {d.rowName} × {d.categoryName}
                  </th>
                  <td className="num">{formatNumber(d.observed)}</td>
                  <td className="num">{d.expected.toFixed(1)}</td>
                  <td className="num">{formatRatio(d.ratio)}</td>
                  <td className="num">
                    {d.adjustedResidual > 0 ? "▲ " : "▼ "}
                    {formatSigned(d.adjustedResidual)}
                  </td>
                  <td className="num">{formatPercent(d.contribution)}</td>
                  <td>{d.alsoLastWeek ? "also a driver" : d.previousResidual === null ? "—" : `new (was ${formatSigned(d.previousResidual)})`}</td>
                </tr>
              ))}
            </tbody>
          </table>
        ) : (
          <p>No cell lies beyond the critical value{r.critical ? ` (±${r.critical.toFixed(2)})` : ""} this week.</p>
        )}
      </section>

      <section aria-labelledby="lines-heading">
        <h2 id="lines-heading">Each line</h2>
        <div className="table-scroll">
          <table className="data" data-testid="week-lines">
            <thead>
              <tr>
                <th scope="col">Line</th>
                <th scope="col" className="num">Defects (before)</th>
                <th scope="col" className="num">Per unit (before)</th>
                <th scope="col">Top categories: share this week, change from the week before</th>
                <th scope="col">Strongest cell</th>
              </tr>
            </thead>
            <tbody>
              {r.lines.map((l) => (
                <tr key={l.code}>
                  <th scope="row">{l.name}</th>
                  <td className="num">
                    {formatNumber(l.defects)} ({formatNumber(l.previousDefects)})
                  </td>
                  <td className="num">
                    {l.dpu === null ? "—" : l.dpu.toFixed(5)} ({l.previousDpu === null ? "—" : l.previousDpu.toFixed(5)})
                  </td>
                  <td>
                    <ol className="top-cats">
                      {l.top.map((t) => (
                        <li key={t.category}>
                          {t.name} {formatPercent(t.share)} ({pp(t.change)})
                        </li>
                      ))}
                    </ol>
                  </td>
                  <td>
                    {l.strongest ? (
                      <>
                        {l.strongest.categoryName} {formatSigned(l.strongest.adjustedResidual)} ({formatRatio(l.strongest.ratio)})
                      </>
                    ) : (
                      "—"
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>

      <section aria-labelledby="shifts-heading">
        <h2 id="shifts-heading">Each line across its shifts</h2>
        <table className="data">
          <thead>
            <tr>
              <th scope="col">Line</th>
              <th scope="col">{r.week.label}</th>
              <th scope="col">{r.previousWeek.label}</th>
              <th scope="col" className="no-print">Timeline</th>
            </tr>
          </thead>
          <tbody>
            {r.shifts.map((s) => (
              <tr key={s.line}>
                <th scope="row">{s.name}</th>
                <td>
                  <TestCell t={s.current} />
                </td>
                <td>
                  <TestCell t={s.previous} />
                </td>
                <td className="no-print">
                  <Link prefetch={false} href={`/comparisons/shifts-${encodeURIComponent(s.line)}`}>rolling windows</Link>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>

      <div className="caution" role="note">
        <strong>Read with care.</strong> An association is not a cause. With many defects, small unimportant differences are significant: read V
        and the ratios. The mix says nothing about the defect rate (see defects per unit). Product disposition follows the plant&apos;s quality
        system, customer requirements and local regulations.
      </div>
      <p className="no-print">
        <Link prefetch={false} href="/">Back to the overview</Link>
      </p>
    </div>
  );
}
