"use client";

import Link from "next/link";
import { useActionState, useState } from "react";
import { saveComparisonSettings } from "../../comparisons/[code]/settings/actions";
import type { ComparisonSettings, CompareKind } from "@/lib/db/comparisons";
import { IDLE } from "@/lib/review/settings-form";

type Option = { code: string; name: string };

function ErrorText({ id, message }: { id: string; message?: string }) {
  return message ? (
    <span id={id} className="error-text">
      {message}
    </span>
  ) : null;
}

function CodePicker({
  name,
  legend,
  options,
  initial,
  error,
  single = false,
  hint,
}: {
  name: string;
  legend: string;
  options: Option[];
  initial: string[] | null;
  error?: string;
  single?: boolean;
  hint?: string;
}) {
  const [all, setAll] = useState(!single && initial === null);
  const errorId = `${name}-error`;
  return (
    <fieldset aria-describedby={error ? errorId : undefined}>
      <legend>{legend}</legend>
      {hint ? <p className="hint">{hint}</p> : null}
      {!single ? (
        <label className="check-all">
          <input type="checkbox" name={`${name}-all`} checked={all} onChange={(e) => setAll(e.target.checked)} /> All, including ones added later
        </label>
      ) : null}
      <ul className="check-list">
        {options.map((o) => (
          <li key={o.code}>
            <label>
              <input
                type={single ? "radio" : "checkbox"}
                name={name}
                value={o.code}
                defaultChecked={initial === null ? !single : initial.includes(o.code)}
                disabled={all}
              />
              {o.name} <span className="muted mono small">{o.code}</span>
            </label>
          </li>
        ))}
      </ul>
      <ErrorText id={errorId} message={error} />
    </fieldset>
  );
}

/** The settings of one comparison; saves through a server action and shows its typed result. */
export function SettingsForm({
  code,
  compare,
  initial,
  lines,
  shifts,
  categories,
}: {
  code: string;
  compare: CompareKind;
  initial: ComparisonSettings;
  lines: Option[];
  shifts: Option[];
  categories: Option[];
}) {
  const [result, action, pending] = useActionState(saveComparisonSettings, IDLE);
  const e = result.fieldErrors;
  const field = (key: string) => ({ "aria-invalid": e[key] ? true : undefined, "aria-describedby": e[key] ? `${key}-error` : undefined });
  return (
    <form action={action} className="settings-form" noValidate>
      <input type="hidden" name="code" value={code} />
      {result.status !== "idle" ? (
        <p className={`form-message ${result.status === "saved" ? "ok" : "error"}`} role={result.status === "saved" ? "status" : "alert"}>
          {result.message}
        </p>
      ) : null}
      <fieldset>
        <legend>Name</legend>
        <div className="field">
          <label htmlFor="name">Name shown on the overview</label>
          <input id="name" name="name" defaultValue={initial.name} maxLength={120} required {...field("name")} />
          <ErrorText id="name-error" message={e.name} />
        </div>
      </fieldset>
      <fieldset>
        <legend>Windows</legend>
        <div className="form-row">
          <div className="field">
            <label htmlFor="windowDays">
              Window length <span className="hint">days</span>
            </label>
            <input id="windowDays" name="windowDays" type="number" min={1} max={366} step={1} defaultValue={initial.windowDays} {...field("windowDays")} />
            <ErrorText id="windowDays-error" message={e.windowDays} />
          </div>
          <div className="field">
            <label htmlFor="stepDays">
              Step <span className="hint">days between window starts</span>
            </label>
            <input id="stepDays" name="stepDays" type="number" min={1} max={366} step={1} defaultValue={initial.stepDays} {...field("stepDays")} />
            <ErrorText id="stepDays-error" message={e.stepDays} />
          </div>
          {compare === "history" ? (
            <div className="field">
              <label htmlFor="historyWeeks">
                Baseline <span className="hint">weeks before each window</span>
              </label>
              <input id="historyWeeks" name="historyWeeks" type="number" min={1} max={104} step={1} defaultValue={initial.historyWeeks} {...field("historyWeeks")} />
              <ErrorText id="historyWeeks-error" message={e.historyWeeks} />
            </div>
          ) : (
            <input type="hidden" name="historyWeeks" value={initial.historyWeeks} />
          )}
        </div>
      </fieldset>
      <fieldset>
        <legend>When a window flags</legend>
        <div className="form-row">
          <div className="field">
            <label htmlFor="alpha">
              α <span className="hint">level for the adjusted p</span>
            </label>
            <input id="alpha" name="alpha" type="number" min={0.0001} max={0.2} step="any" defaultValue={initial.alpha} {...field("alpha")} />
            <ErrorText id="alpha-error" message={e.alpha} />
          </div>
          <div className="field">
            <label htmlFor="adjust">Adjustment across windows</label>
            <select id="adjust" name="adjust" defaultValue={initial.adjust} {...field("adjust")}>
              <option value="bh">False discovery rate (Benjamini–Hochberg)</option>
              <option value="bonferroni">Bonferroni (stricter)</option>
              <option value="none">None (every window on its own)</option>
            </select>
            <ErrorText id="adjust-error" message={e.adjust} />
          </div>
          <div className="field">
            <label htmlFor="minEffect">
              Minimum effect <span className="hint">V; 0 = off</span>
            </label>
            <input id="minEffect" name="minEffect" type="number" min={0} max={1} step="any" defaultValue={initial.minEffect} {...field("minEffect")} />
            <ErrorText id="minEffect-error" message={e.minEffect} />
          </div>
          <div className="field">
            <label htmlFor="sparse">Tables with small expected counts</label>
            <select id="sparse" name="sparse" defaultValue={initial.sparse} {...field("sparse")}>
              <option value="auto">Exact test when feasible, else sequential Monte Carlo (up to 10,000 tables)</option>
              <option value="pool">Pool sparse categories first</option>
              <option value="exact">Exact test</option>
              <option value="monte-carlo">Monte Carlo (sequential, up to 10,000 tables)</option>
              <option value="asymptotic">Chi-square approximation anyway</option>
            </select>
            <ErrorText id="sparse-error" message={e.sparse} />
          </div>
        </div>
      </fieldset>
      <CodePicker
        name="lines"
        legend={compare === "history" ? "Line followed" : "Lines"}
        options={lines}
        initial={initial.lines}
        error={e.lines}
        single={compare === "history"}
      />
      <CodePicker name="shifts" legend="Shifts" options={shifts} initial={initial.shifts} error={e.shifts} />
      <CodePicker name="categories" legend="Defect categories" options={categories} initial={initial.categories} error={e.categories} />
      <p className="form-row">
        <button type="submit" disabled={pending}>
          {pending ? "Saving…" : "Save settings"}
        </button>
        <Link prefetch={false} href={`/comparisons/${encodeURIComponent(code)}`}>Back to the timeline</Link>
      </p>
    </form>
  );
}
