"use client";

import { useEffect, useMemo, useRef, useState, type KeyboardEvent } from "react";
import { useRouter } from "next/navigation";
import {
  discard,
  enqueue,
  flush,
  newIdempotencyKey,
  pendingItems,
  sheetId,
  startOutbox,
  subscribe,
  type OutboxItem,
  type SheetPayload,
  type SheetResult,
} from "./outbox";

type Category = { code: string; name: string; family: string | null; active: boolean; recorded: number };

type Props = {
  sheet: {
    date: string;
    shift: { code: string; name: string };
    line: { code: string; name: string };
    basis: string;
    recordedDefects: number;
    recordedUnits: number | null;
    entries: number;
    recordedBy: { name: string; at: string }[];
  };
  categories: Category[];
  products: { code: string; name: string }[];
  correctionHint: string | null;
  /** False when this person cannot correct this sheet now (the server decides per entry anyway). */
  mayCorrect: boolean;
  autoFocus: boolean;
};

type Mode = "new" | "add" | "correct";

const MAX_COUNT = 1_000_000;
const MAX_UNITS = 100_000_000;
const fmt = (n: number) => n.toLocaleString("en");

function checkNumber(raw: string, max: number): number | string | null {
  const s = raw.trim();
  if (s === "") return null;
  if (!/^\d+$/.test(s)) return "Whole numbers only.";
  const n = Number(s);
  if (n > max) return `At most ${fmt(max)}.`;
  return n;
}

type Notice =
  | { kind: "ok"; title: string; lines: string[] }
  | { kind: "error"; title: string; lines: string[] }
  | null;

function confirmation(item: OutboxItem, result: SheetResult): Notice {
  const p = item.payload;
  const lines: string[] = [];
  const categories = p.counts.filter((c) => c.count > 0).length;
  if (p.mode === "correct") {
    lines.push(`${result.stored.corrections} count${result.stored.corrections === 1 ? "" : "s"} corrected (reason: ${p.reason}).`);
  } else {
    lines.push(
      `${p.mode === "add" ? "Added" : "Recorded"} ${fmt(result.totals.defects)} defect${result.totals.defects === 1 ? "" : "s"} in ${categories} categor${categories === 1 ? "y" : "ies"}` +
        (result.stored.inspections ? ` and ${fmt(result.totals.units)} units inspected.` : "."),
    );
  }
  lines.push(`Sheet total now: ${fmt(result.sheet.defects)} defects, ${fmt(result.sheet.units)} units inspected.`);
  if (result.replay) lines.push("(The server already had this sheet from an earlier attempt; it was counted once.)");
  return { kind: "ok", title: `Saved: ${item.label}`, lines };
}

export function FloorSheet({ sheet, categories, products, correctionHint, mayCorrect, autoFocus }: Props) {
  const router = useRouter();
  const id = sheetId(sheet.date, sheet.shift.code, sheet.line.code);
  const label = `${sheet.line.name} · ${sheet.shift.name} · ${sheet.date}`;
  const hasRecords = sheet.entries > 0;

  const [chosen, setChosen] = useState<Mode | null>(null);
  const mode: Mode | null = hasRecords ? (chosen === "new" ? null : chosen) : "new";
  const shown = useMemo(() => categories.filter((c) => c.active || mode === "correct"), [categories, mode]);
  const [values, setValues] = useState<Record<string, string>>({});
  const [units, setUnits] = useState("");
  const [product, setProduct] = useState("");
  const [note, setNote] = useState("");
  const [reason, setReason] = useState("");
  const [touched, setTouched] = useState(false);
  const [notice, setNotice] = useState<Notice>(null);
  const [pending, setPending] = useState<OutboxItem[]>([]);
  const [clock, setClock] = useState(() => Date.now());
  const noticeRef = useRef<HTMLDivElement>(null);
  const firstInput = useRef<HTMLInputElement>(null);

  // Outbox: pending sheets survive reloads and are retried until acknowledged.
  useEffect(() => {
    startOutbox();
    setPending(pendingItems());
    return subscribe((event) => {
      setPending(pendingItems());
      if (event.type === "acknowledged" && event.item.sheetId === id) {
        setNotice(confirmation(event.item, event.result));
        setValues({});
        setUnits("");
        setNote("");
        setReason("");
        setChosen(null);
        setTouched(false);
        router.refresh();
      }
      if (event.type === "refused" && event.item.sheetId === id) {
        // Nothing was stored: the numbers stay in the form to fix and send again.
        const p = event.item.payload;
        setValues(Object.fromEntries(p.counts.map((c) => [c.category, String(c.count)])));
        setUnits(p.units === null ? "" : String(p.units));
        setNote(p.note ?? "");
        setReason(p.reason ?? "");
        if (event.code === "sheet-changed") setChosen(null);
        else setChosen(p.mode === "new" ? null : p.mode);
        setNotice({ kind: "error", title: `Not saved: ${event.item.label}`, lines: [event.message, ...event.messages] });
        router.refresh();
      }
    });
  }, [id, router]);

  useEffect(() => {
    if (notice) noticeRef.current?.focus();
  }, [notice]);

  useEffect(() => {
    if (autoFocus) firstInput.current?.focus();
  }, [autoFocus]);

  const mine = pending.find((p) => p.sheetId === id) ?? null;
  const others = pending.filter((p) => p.sheetId !== id);
  const waiting = pending.some((p) => p.nextAttemptAt !== null);
  useEffect(() => {
    if (!waiting) return;
    const t = setInterval(() => setClock(Date.now()), 1000);
    return () => clearInterval(t);
  }, [waiting]);

  function choose(next: Mode) {
    setNotice(null);
    if (next === "correct") {
      // The numbers become the totals: start from what is recorded.
      setValues(Object.fromEntries(categories.map((c) => [c.code, String(c.recorded)])));
      setUnits(sheet.recordedUnits === null ? "" : String(sheet.recordedUnits));
    } else if (chosen === "correct") {
      // Totals are not additions: start additional counts from zero.
      setValues({});
      setUnits("");
    }
    // Otherwise numbers already typed (e.g. a sheet someone else recorded meanwhile) stay for review.
    setChosen(next);
  }

  const errors: Record<string, string> = {};
  for (const c of shown) {
    const v = checkNumber(values[c.code] ?? "", MAX_COUNT);
    if (typeof v === "string") errors[c.code] = v;
  }
  const unitsCheck = checkNumber(units, MAX_UNITS);
  if (typeof unitsCheck === "string") errors.units = unitsCheck;
  const countOf = (code: string) => {
    const v = checkNumber(values[code] ?? "", MAX_COUNT);
    return typeof v === "number" ? v : 0;
  };
  const total = shown.reduce((s, c) => s + countOf(c.code), 0);

  function step(code: string, delta: number) {
    setValues((prev) => {
      const current = checkNumber(prev[code] ?? "", MAX_COUNT);
      const base = typeof current === "number" ? current : 0;
      return { ...prev, [code]: String(Math.min(MAX_COUNT, Math.max(0, base + delta))) };
    });
  }

  function onCountKey(event: KeyboardEvent<HTMLInputElement>, code: string) {
    if (event.key === "+" || event.key === "=" || event.key === "ArrowUp") {
      event.preventDefault();
      step(code, 1);
    } else if (event.key === "-" || event.key === "ArrowDown") {
      event.preventDefault();
      step(code, -1);
    }
  }

  function submit() {
    setTouched(true);
    if (!mode) {
      setNotice({ kind: "error", title: "Choose first", lines: ["This sheet already has counts: choose “Record additional” or “Correct recorded counts”."] });
      return;
    }
    if (Object.keys(errors).length) {
      setNotice({ kind: "error", title: "Check the highlighted numbers", lines: Object.entries(errors).map(([k, v]) => `${categories.find((c) => c.code === k)?.name ?? "Units inspected"}: ${v}`) });
      return;
    }
    if (mode === "correct" && !reason.trim()) {
      setNotice({ kind: "error", title: "A correction needs a reason", lines: ["Say briefly why the recorded counts are wrong."] });
      return;
    }
    const unitsValue = typeof unitsCheck === "number" ? unitsCheck : null;
    if (mode === "add" && total === 0 && !unitsValue) {
      setNotice({ kind: "error", title: "Nothing to add", lines: ["Every count is 0."] });
      return;
    }
    const key = newIdempotencyKey();
    const payload: SheetPayload = {
      idempotencyKey: key,
      date: sheet.date,
      shift: sheet.shift.code,
      line: sheet.line.code,
      product: product || null,
      note: note.trim() || null,
      units: unitsValue,
      counts: shown.map((c) => ({ category: c.code, count: countOf(c.code) })),
      mode,
      reason: mode === "correct" ? reason.trim() : null,
      basis: sheet.basis,
    };
    setNotice(null);
    enqueue({ key, sheetId: id, label, payload });
  }

  const locked = mine !== null;
  const secondsLeft = mine?.nextAttemptAt ? Math.max(0, Math.ceil((mine.nextAttemptAt - clock) / 1000)) : null;

  return (
    <section className="floor-sheet" aria-labelledby="sheet-title">
      <h2 id="sheet-title">{label}</h2>

      <div ref={noticeRef} tabIndex={-1} aria-live="polite" className="sheet-notice-slot">
        {notice && (
          <div className={notice.kind === "ok" ? "sheet-notice sheet-notice-ok" : "sheet-notice sheet-notice-error"} role={notice.kind === "ok" ? "status" : "alert"}>
            <p className="sheet-notice-title">
              <span aria-hidden="true">{notice.kind === "ok" ? "✓ " : "! "}</span>
              {notice.title}
            </p>
            {notice.lines.map((l) => (
              <p key={l}>{l}</p>
            ))}
          </div>
        )}
      </div>

      {mine && (
        <div className="sheet-notice sheet-notice-pending" role="status">
          <p className="sheet-notice-title">
            {mine.needsSignIn
              ? "Not sent: your sign-in has ended."
              : mine.lastError
                ? `Not sent yet — kept on this device. ${mine.lastError}`
                : "Sending…"}
          </p>
          {mine.needsSignIn ? (
            <p>
              <a href={`/signin?next=${encodeURIComponent(`/entry?line=${sheet.line.code}&shift=${sheet.shift.code}&date=${sheet.date}`)}`}>Sign in again</a>; the
              sheet is sent as soon as this page opens.
            </p>
          ) : (
            secondsLeft !== null && <p>Next try in {secondsLeft} s (and as soon as the network is back). It will be counted once.</p>
          )}
          <div className="form-row">
            <button type="button" className="secondary" onClick={() => void flush(true)} disabled={mine.needsSignIn}>
              Send now
            </button>
            <button
              type="button"
              className="secondary"
              onClick={() => {
                if (window.confirm("Throw away this sheet without sending it? If an earlier attempt reached the server, it stays recorded.")) discard(mine.key);
              }}
            >
              Discard
            </button>
          </div>
        </div>
      )}
      {others.length > 0 && (
        <p className="caution">
          {others.length} other sheet{others.length === 1 ? "" : "s"} on this device waiting to be sent: {others.map((o) => o.label).join("; ")}.
        </p>
      )}

      {hasRecords && (
        <div className="card sheet-recorded">
          <p>
            <strong>Already recorded:</strong> {fmt(sheet.recordedDefects)} defects
            {sheet.recordedUnits !== null ? `, ${fmt(sheet.recordedUnits)} units inspected` : ""} — by{" "}
            {sheet.recordedBy.map((r) => `${r.name} (${r.at})`).join(", ")}.
          </p>
          <fieldset className="mode-choice" disabled={locked}>
            <legend>Enter more for this sheet?</legend>
            <label className="checkbox">
              <input type="radio" name="mode" value="add" checked={mode === "add"} onChange={() => choose("add")} />
              Record additional defects (added to what is recorded)
            </label>
            <label className="checkbox">
              <input type="radio" name="mode" value="correct" checked={mode === "correct"} disabled={!mayCorrect} onChange={() => choose("correct")} />
              Correct recorded counts (the numbers become the totals)
            </label>
          </fieldset>
          {correctionHint && <p className="muted">{correctionHint}</p>}
        </div>
      )}

      <form
        noValidate
        onSubmit={(event) => {
          event.preventDefault();
          submit();
        }}
      >
        <fieldset disabled={locked || (hasRecords && !mode)} className="sheet-fieldset">
          <legend className="visually-hidden">Counts</legend>
          <div className="sheet-grid" role="group" aria-label="Defect counts">
            <div className="sheet-head" aria-hidden="true">
              <span>Defect</span>
              <span className="num">{mode === "correct" ? "Corrected total" : mode === "add" ? "Additional" : "Count"}</span>
              <span className="num">Recorded</span>
            </div>
            {shown.map((c, i) => {
              const fieldId = `count-${c.code}`;
              const error = touched ? errors[c.code] : undefined;
              return (
                <div className="sheet-row" key={c.code}>
                  <label htmlFor={fieldId} className="sheet-label">
                    {c.name}
                    {c.family && <span className="muted sheet-family"> {c.family}</span>}
                    {!c.active && <span className="muted"> (retired)</span>}
                  </label>
                  <div className="stepper">
                    <button type="button" tabIndex={-1} className="secondary step" aria-label={`One less ${c.name}`} onClick={() => step(c.code, -1)}>
                      −
                    </button>
                    <input
                      ref={i === 0 ? firstInput : undefined}
                      id={fieldId}
                      name={c.code}
                      inputMode="numeric"
                      autoComplete="off"
                      className="count-input num"
                      value={values[c.code] ?? ""}
                      placeholder="0"
                      aria-invalid={error ? true : undefined}
                      aria-describedby={`${fieldId}-recorded${error ? ` ${fieldId}-error` : ""}`}
                      onChange={(e) => setValues((prev) => ({ ...prev, [c.code]: e.target.value }))}
                      onKeyDown={(e) => onCountKey(e, c.code)}
                      onFocus={(e) => e.target.select()}
                    />
                    <button type="button" tabIndex={-1} className="secondary step" aria-label={`One more ${c.name}`} onClick={() => step(c.code, 1)}>
                      +
                    </button>
                  </div>
                  <span id={`${fieldId}-recorded`} className="num muted sheet-recorded-count">
                    <span className="visually-hidden">recorded so far </span>
                    {c.recorded}
                  </span>
                  {error && (
                    <span id={`${fieldId}-error`} className="error-text sheet-error">
                      {error}
                    </span>
                  )}
                </div>
              );
            })}
          </div>

          <div className="form-row sheet-extra">
            <div className="field">
              <label htmlFor="units">Units inspected{mode === "correct" ? " (corrected total)" : mode === "add" ? " (additional)" : ""}</label>
              <input
                id="units"
                name="units"
                inputMode="numeric"
                autoComplete="off"
                className="num units-input"
                value={units}
                aria-invalid={touched && errors.units ? true : undefined}
                aria-describedby={touched && errors.units ? "units-error" : undefined}
                onChange={(e) => setUnits(e.target.value)}
              />
              {touched && errors.units && (
                <span id="units-error" className="error-text">
                  {errors.units}
                </span>
              )}
            </div>
            {products.length > 0 && mode !== "correct" && (
              <div className="field">
                <label htmlFor="product">Product (optional)</label>
                <select id="product" name="product" value={product} onChange={(e) => setProduct(e.target.value)}>
                  <option value="">—</option>
                  {products.map((p) => (
                    <option key={p.code} value={p.code}>
                      {p.name} ({p.code})
                    </option>
                  ))}
                </select>
              </div>
            )}
            {mode !== "correct" && (
              <div className="field sheet-note">
                <label htmlFor="note">Note (optional)</label>
                <input id="note" name="note" maxLength={500} value={note} onChange={(e) => setNote(e.target.value)} />
              </div>
            )}
            {mode === "correct" && (
              <div className="field sheet-note">
                <label htmlFor="reason">Reason for the correction</label>
                <input id="reason" name="reason" maxLength={500} required value={reason} onChange={(e) => setReason(e.target.value)} />
              </div>
            )}
          </div>

          <div className="form-row sheet-submit">
            <button type="submit" className="submit-sheet">
              {mode === "correct" ? "Save corrections" : mode === "add" ? `Add ${fmt(total)} defects` : `Submit sheet (${fmt(total)} defects)`}
            </button>
            <span className="muted">Enter submits · + / − or ↑ / ↓ change a count</span>
          </div>
        </fieldset>
      </form>
    </section>
  );
}
