import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { requirePageUser } from "@/lib/auth/guard";
import { episodeOwners, getEpisode } from "@/lib/db/episodes";
import { readingOf, loadEpisodeContext } from "@/lib/episodes/context";
import { liveSource } from "@/lib/episodes/live-source";
import { BRIEF_CAUTIONS } from "@/lib/episodes/brief-data";
import type { CellState, MeasureDiff } from "@/lib/episodes/snapshot-diff";
import { STATUS_LABELS, TRANSITIONS, reasonRequired, statusLabel } from "@/lib/episodes/status";
import { syncComparison } from "@/lib/episodes/sync";
import { databaseTrouble } from "@/lib/db/errors";
import { logServerError } from "@/lib/http/errors";
import { formatExpected, formatNumber, formatP, formatPercent, formatRange, formatRatio, formatSigned, formatV } from "@/lib/review/format";
import { StatusBadge } from "../status-badge";
import { ActionRefsForm, NoteForm, OwnerForm, StatusForm } from "./review-forms";
import { ThenNowTable } from "./then-now-table";
import "../episodes.css";

export const dynamic = "force-dynamic";

type Params = Promise<{ id: string }>;
type Search = Promise<Record<string, string | string[] | undefined>>;

function parseId(text: string): number | null {
  return /^[1-9]\d{0,9}$/.test(text) ? Number(text) : null;
}

export async function generateMetadata({ params }: { params: Params }): Promise<Metadata> {
  const { id } = await params;
  return { title: `Flagged period #${parseId(id) ?? "?"}` };
}

function when(d: Date): string {
  return `${d.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}

function measureText(m: MeasureDiff, v: number | string | null): string {
  if (v === null) return "—";
  if (typeof v === "string") return v;
  if (m.key === "pValue" || m.key === "adjustedPValue") return formatP(v);
  if (m.key === "cramersVCorrected") return formatV(v);
  if (m.key === "n") return formatNumber(v);
  return formatNumber(v, 2);
}

function cellText(c: CellState | null): string {
  if (!c) return "—";
  return `${formatNumber(c.observed)} obs. / ${formatExpected(c.expected)} exp. / ${formatSigned(c.adjustedResidual)}${c.driver ? " (driver)" : ""}`;
}

const ACTION_LABELS: Record<string, string> = {
  "episode.raise": "Raised by the scan",
  "episode.range": "Range changed by a rescan",
  "episode.gone": "No longer found by the scan",
  "episode.revive": "Found again by the scan",
  "episode.status": "Status changed",
  "episode.owner": "Owner changed",
  "episode.action-refs": "Action references changed",
  "episode.note": "Note added",
};

function auditText(action: string, before: unknown, after: unknown): string {
  const b = (before ?? {}) as Record<string, unknown>;
  const a = (after ?? {}) as Record<string, unknown>;
  if (action === "episode.status") return `${statusLabel(String(b.status))} → ${statusLabel(String(a.status))}`;
  if (action === "episode.owner") return `${b.owner ?? "nobody"} → ${a.owner ?? "nobody"}`;
  if (action === "episode.action-refs") return `${b.actionRefs ?? "none"} → ${a.actionRefs ?? "none"}`;
  if (action === "episode.range" || action === "episode.revive") {
    return `${b.start ?? "?"}…${b.end ?? "?"} → ${a.start ?? "?"}…${a.end ?? "?"}`;
  }
  if (action.startsWith("export.episodes.")) return `exported as ${action.slice("export.episodes.".length).toUpperCase()}`;
  return "";
}

export default async function EpisodePage({ params, searchParams }: { params: Params; searchParams: Search }) {
  const { id: raw } = await params;
  const id = parseId(raw);
  await requirePageUser("engineer", { path: `/episodes/${raw}` });
  if (id === null) notFound();
  const existing = await getEpisode(id);
  if (!existing) notFound();
  let syncError: string | null = null;
  try {
    await syncComparison(liveSource, existing.comparison.id);
  } catch (error) {
    const trouble = databaseTrouble(error);
    syncError = trouble ? trouble.message : `The latest scan could not be read (reference ${logServerError(error, `episode ${id} sync`)}).`;
  }
  const search = await searchParams;
  const snapshotParam = Array.isArray(search.snapshot) ? search.snapshot[0] : search.snapshot;
  const ctx = await loadEpisodeContext(liveSource, id, { snapshotId: snapshotParam ? Number(snapshotParam) : undefined });
  if (!ctx) notFound();
  const owners = await episodeOwners();
  const { record: e, comparison, peak, diff, snapshot } = ctx;
  const kind = comparison.compare === "shift" ? "shift" : comparison.compare === "history" ? "history" : "line";
  const rowName = (code: string) => ctx.names.row(kind, code, comparison.config.historyWeeks);
  const reading = readingOf(ctx, peak);
  const code = encodeURIComponent(comparison.code);
  const statusOptions = TRANSITIONS[e.status].map((s) => ({ value: s, label: STATUS_LABELS[s], reasonRequired: reasonRequired(e.status, s) }));
  const peakCells = new Map((peak?.drivers ?? []).map((d) => [`${d.row}\u0000${d.category}`, d]));
  return (
    <>
      <p className="crumbs">
        <Link href="/episodes">Flagged periods</Link> ›
      </p>
      <div className="page-head">
        <h1>
          Flagged period #{e.id}: {comparison.name}
        </h1>
        <p className="episode-head-status">
          <StatusBadge status={e.status} />
          {e.goneAt && <span className="episode-gone">no longer found by the scan since {when(e.goneAt)}</span>}
        </p>
      </div>
      {syncError && (
        <p className="caution" role="alert">
          {syncError} The record shows what was last synced.
        </p>
      )}

      <section className="card" aria-labelledby="flagged-heading">
        <h2 id="flagged-heading">What was flagged</h2>
        <dl className="episode-facts">
          <dt>Comparison</dt>
          <dd>
            <Link href={`/comparisons/${code}`}>{comparison.name}</Link> <span className="muted mono">({comparison.code})</span>
          </dd>
          <dt>Period</dt>
          <dd>
            {formatRange(e.start, e.end)}: {e.windows} flagged {e.windows === 1 ? "window" : "windows"} of {comparison.config.windowDays} days
          </dd>
          <dt>Peak window</dt>
          <dd>
            <Link href={`/comparisons/${code}/windows/${e.peakStart}`}>{formatRange(e.peakStart, e.peakEnd)}</Link>{" "}
            <span className="muted">(smallest adjusted p: {formatP(e.minAdjustedP)})</span>
          </dd>
          <dt>Evidence now</dt>
          <dd>
            {peak && peak.testable
              ? `adjusted p = ${formatP(peak.adjustedPValue)}, p = ${formatP(peak.pValue)}, bias-corrected V = ${formatV(peak.cramersVCorrected)}, ${formatNumber(peak.n)} defects, ${peak.method} test`
              : "the peak window cannot be analysed now"}
          </dd>
          <dt>First raised</dt>
          <dd>{when(e.firstSeenAt)}</dd>
          <dt>{e.goneAt ? "Last found" : "Last seen by the scan"}</dt>
          <dd>{when(e.lastSeenAt)}</dd>
        </dl>
        {reading && (
          <div className="episode-reading" data-testid="reading">
            <p className="reading-headline">
              <strong>{reading.headline}</strong>
            </p>
            <ul>
              {[...reading.sentences, ...reading.rateSentences].map((s) => (
                <li key={s}>{s}</li>
              ))}
            </ul>
          </div>
        )}
        <p>
          <Link href={`/comparisons/${code}`}>Timeline of this comparison</Link> ·{" "}
          <Link href={`/comparisons/${code}/windows/${e.peakStart}`}>The peak window in full</Link>
          {ctx.live && ctx.live.peakStart !== e.peakStart && (
            <>
              {" "}
              · <Link href={`/comparisons/${code}/windows/${ctx.live.peakStart}`}>The peak window now</Link>
            </>
          )}
        </p>
      </section>

      <section className="card" aria-labelledby="drivers-heading">
        <h2 id="drivers-heading">Drivers</h2>
        {e.drivers.length === 0 ? (
          <p className="muted">No single cell drives this period: the difference is spread over many cells.</p>
        ) : (
          <div className="table-scroll">
            <table className="data">
              <thead>
                <tr>
                  <th scope="col">{kind === "shift" ? "Shift" : kind === "history" ? "Period" : "Line"}</th>
                  <th scope="col">Category</th>
                  <th scope="col" className="num">
                    Windows driven
                  </th>
                  <th scope="col" className="num">
                    Largest adj. residual
                  </th>
                  <th scope="col" className="num">
                    Peak: observed
                  </th>
                  <th scope="col" className="num">
                    Peak: expected
                  </th>
                  <th scope="col" className="num">
                    Ratio
                  </th>
                  <th scope="col" className="num">
                    Share of X²
                  </th>
                </tr>
              </thead>
              <tbody>
                {e.drivers.map((d) => {
                  const p = peakCells.get(`${d.row}\u0000${d.category}`);
                  return (
                    <tr key={`${d.row}-${d.category}`}>
                      <td>{rowName(d.row)}</td>
                      <td>{ctx.names.category(d.category)}</td>
                      <td className="num">{d.windows}</td>
                      <td className="num">{formatSigned(d.adjustedResidual)}</td>
                      <td className="num">{p ? formatNumber(p.observed) : "—"}</td>
                      <td className="num">{p ? formatExpected(p.expected) : "—"}</td>
                      <td className="num">{p ? formatRatio(p.ratio) : "—"}</td>
                      <td className="num">{p ? formatPercent(p.contribution) : "—"}</td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
          </div>
        )}
      </section>

      <section className="card" aria-labelledby="review-heading">
        <h2 id="review-heading">Review</h2>
        <dl className="episode-facts">
          <dt>Status</dt>
          <dd>
            <StatusBadge status={e.status} />
          </dd>
          <dt>Owner</dt>
          <dd data-testid="episode-owner">{e.owner?.name ?? "nobody yet"}</dd>
          <dt>Action references</dt>
          <dd data-testid="episode-refs">{e.actionRefs ?? "none recorded"}</dd>
        </dl>
        <p className="muted small">
          Workflow: new → under investigation → explained, no action, or false alarm. A closed period can be reopened. Every
          change keeps a snapshot of the analysis as it stood.
        </p>
        <StatusForm id={e.id} options={statusOptions} />
        <OwnerForm id={e.id} ownerId={e.owner?.id ?? null} owners={owners} />
        <ActionRefsForm id={e.id} actionRefs={e.actionRefs} />
      </section>

      <section className="card" aria-labelledby="notes-heading">
        <h2 id="notes-heading">Notes</h2>
        {ctx.notes.length === 0 ? (
          <p className="muted">No notes yet.</p>
        ) : (
          <ol className="episode-notes">
            {ctx.notes.map((n) => (
              <li key={n.id}>
                <p className="episode-note-meta">
                  <strong>{n.author.name}</strong> · <time dateTime={n.createdAt.toISOString()}>{when(n.createdAt)}</time>
                </p>
                <p className="episode-note-body">{n.body}</p>
              </li>
            ))}
          </ol>
        )}
        <NoteForm id={e.id} />
      </section>

      <section className="card" aria-labelledby="changes-heading" data-testid="then-now">
        <h2 id="changes-heading">Then and now</h2>
        {!diff || !snapshot ? (
          <p className="muted">No snapshot is stored for this period.</p>
        ) : (
          <>
            <p>
              The snapshot taken{" "}
              {snapshot.reason === "raised" ? "when the period was raised" : `when the status became “${statusLabel(snapshot.status)}”`} (
              {when(snapshot.takenAt)}) against the live result, for the window {formatRange(diff.window.start, diff.window.end)}.{" "}
              {diff.anyChange ? (
                <strong className="episode-changed-note">Late data or settings have changed the numbers: changed values are marked.</strong>
              ) : (
                "Nothing has changed since."
              )}
            </p>
            {ctx.snapshots.length > 1 && (
              <nav aria-label="Snapshots" className="episode-snapshots no-print">
                Compare with:{" "}
                {ctx.snapshots.map((s, i) => (
                  <span key={s.id}>
                    {i > 0 && " · "}
                    {s.id === snapshot.id ? (
                      <strong aria-current="true">{s.reason === "raised" ? "raised" : statusLabel(s.status)}</strong>
                    ) : (
                      <Link href={`/episodes/${e.id}?snapshot=${s.id}`}>{s.reason === "raised" ? "raised" : statusLabel(s.status)}</Link>
                    )}{" "}
                    <span className="muted small">({when(s.takenAt)})</span>
                  </span>
                ))}
              </nav>
            )}
            {diff.liveMissing && <p className="caution">{diff.liveMissing}</p>}
            <ThenNowTable
              heading="Measure"
              rows={[
                {
                  key: "range",
                  label: "Flagged period",
                  then: `${formatRange(diff.range.then.start, diff.range.then.end)} (${diff.range.then.windows})`,
                  now: diff.range.now ? `${formatRange(diff.range.now.start, diff.range.now.end)} (${diff.range.now.windows})` : "no longer found",
                  changed: diff.range.changed,
                },
                ...diff.measures.map((m) => ({
                  key: m.key,
                  label: m.label,
                  then: measureText(m, m.then),
                  now: measureText(m, m.now),
                  changed: m.changed,
                  data: { "data-measure": m.key } as const,
                })),
              ]}
            />
            {diff.cells.length > 0 && (
              <ThenNowTable
                heading="Cell"
                caption="Driver cells, and any cell whose count changed"
                rows={diff.cells.map((c) => ({
                  key: `${c.row}-${c.category}`,
                  label: `${rowName(c.row)} · ${ctx.names.category(c.category)}`,
                  then: cellText(c.then),
                  now: cellText(c.now),
                  changed: c.changed,
                  data: { "data-cell": `${c.row}:${c.category}` } as const,
                }))}
              />
            )}
          </>
        )}
      </section>

      <section className="card no-print" aria-labelledby="exports-heading">
        <h2 id="exports-heading">Exports for the meeting</h2>
        <p className="episode-exports">
          <a className="button" href={`/episodes/${e.id}/export/pdf`} download>
            PDF brief
          </a>
          <a className="button secondary" href={`/episodes/${e.id}/export/csv`} download>
            CSV (long form)
          </a>
          <a className="button secondary" href={`/episodes/${e.id}/export/json`} download>
            JSON
          </a>
        </p>
        <p className="muted small">
          The CSV has one row per window × group × category of this period, with observed and expected counts, adjusted
          residuals, shares of X², p, adjusted p and the method. Every export is recorded.
        </p>
      </section>

      <section className="card" aria-labelledby="history-heading">
        <h2 id="history-heading">History</h2>
        <div className="table-scroll">
          <table className="data">
            <thead>
              <tr>
                <th scope="col">When</th>
                <th scope="col">Who</th>
                <th scope="col">What</th>
                <th scope="col">Detail</th>
                <th scope="col">Reason</th>
              </tr>
            </thead>
            <tbody>
              {ctx.audit.map((a) => (
                <tr key={a.id}>
                  <td>{when(a.at)}</td>
                  <td>{a.actorName}</td>
                  <td>{ACTION_LABELS[a.action] ?? (a.action.startsWith("export.") ? "Exported" : a.action)}</td>
                  <td>{auditText(a.action, a.before, a.after)}</td>
                  <td>{a.reason ?? ""}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>

      <aside className="caution" aria-label="Cautions">
        <strong>Read with care</strong>
        <ul>
          {BRIEF_CAUTIONS.map((c) => (
            <li key={c}>{c}</li>
          ))}
        </ul>
      </aside>
    </>
  );
}
