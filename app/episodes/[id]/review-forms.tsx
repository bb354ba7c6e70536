"use client";

import { useActionState, useEffect, useRef, useState } from "react";
import { addNoteAction, changeStatusAction, setActionRefsAction, setOwnerAction, type EpisodeActionResult } from "../actions";

type Option = { value: string; label: string; reasonRequired: boolean };

function Result({ state }: { state: EpisodeActionResult | null }) {
  return (
    <p className="action-result" role="status" aria-live="polite">
      {state ? state.ok ? <span className="ok-text">{state.message}</span> : <span className="error-text">{state.error}</span> : null}
    </p>
  );
}

/** Next status (only the allowed ones) and the reason, which decisions require. */
export function StatusForm({ id, options }: { id: number; options: Option[] }) {
  const [state, action, pending] = useActionState(changeStatusAction, null);
  const [picked, setChoice] = useState(options[0]?.value ?? "");
  const form = useRef<HTMLFormElement>(null);
  useEffect(() => {
    if (state?.ok) form.current?.reset();
  }, [state]);
  // After a change the allowed next statuses are new: fall back to the first of them.
  const choice = options.some((o) => o.value === picked) ? picked : (options[0]?.value ?? "");
  const required = options.find((o) => o.value === choice)?.reasonRequired ?? true;
  if (options.length === 0) return <p className="muted">No status change is possible from here.</p>;
  return (
    <form action={action} ref={form} className="episode-form">
      <input type="hidden" name="id" value={id} />
      <div className="form-row">
        <div className="field">
          <label htmlFor="episode-status">New status</label>
          <select id="episode-status" name="status" value={choice} onChange={(e) => setChoice(e.target.value)}>
            {options.map((o) => (
              <option key={o.value} value={o.value}>
                {o.label}
              </option>
            ))}
          </select>
        </div>
        <div className="field episode-reason">
          <label htmlFor="episode-reason">Reason{required ? "" : " (optional)"}</label>
          <textarea
            id="episode-reason"
            name="reason"
            rows={2}
            required={required}
            maxLength={2000}
            aria-invalid={state && !state.ok && state.field === "reason" ? true : undefined}
            placeholder={required ? "What was found, or why no action is needed" : "Optional"}
          />
        </div>
        <div className="field">
          <button type="submit" disabled={pending}>
            {pending ? "Saving…" : "Change status"}
          </button>
        </div>
      </div>
      <Result state={state} />
    </form>
  );
}

/** A form field that follows its saved value when the page re-renders with a new one. */
function useSaved(saved: string): [string, (v: string) => void] {
  const [value, setValue] = useState(saved);
  useEffect(() => setValue(saved), [saved]);
  return [value, setValue];
}

export function OwnerForm({ id, ownerId, owners }: { id: number; ownerId: number | null; owners: { id: number; name: string }[] }) {
  const [state, action, pending] = useActionState(setOwnerAction, null);
  const [value, setValue] = useSaved(ownerId === null ? "" : String(ownerId));
  return (
    <form action={action} className="episode-form">
      <input type="hidden" name="id" value={id} />
      <div className="form-row">
        <div className="field">
          <label htmlFor="episode-owner">Owner</label>
          <select id="episode-owner" name="ownerId" value={value} onChange={(e) => setValue(e.target.value)}>
            <option value="">Nobody yet</option>
            {owners.map((o) => (
              <option key={o.id} value={o.id}>
                {o.name}
              </option>
            ))}
          </select>
        </div>
        <div className="field">
          <button type="submit" className="secondary" disabled={pending}>
            Save owner
          </button>
        </div>
      </div>
      <Result state={state} />
    </form>
  );
}

export function ActionRefsForm({ id, actionRefs }: { id: number; actionRefs: string | null }) {
  const [state, action, pending] = useActionState(setActionRefsAction, null);
  const [value, setValue] = useSaved(actionRefs ?? "");
  return (
    <form action={action} className="episode-form">
      <input type="hidden" name="id" value={id} />
      <div className="form-row">
        <div className="field episode-refs">
          <label htmlFor="episode-refs">Containment / corrective-action references</label>
          <input id="episode-refs" name="actionRefs" value={value} onChange={(e) => setValue(e.target.value)} maxLength={500} placeholder="e.g. the plant's containment and CAPA numbers" />
        </div>
        <div className="field">
          <button type="submit" className="secondary" disabled={pending}>
            Save references
          </button>
        </div>
      </div>
      <Result state={state} />
    </form>
  );
}

export function NoteForm({ id }: { id: number }) {
  const [state, action, pending] = useActionState(addNoteAction, null);
  const form = useRef<HTMLFormElement>(null);
  useEffect(() => {
    if (state?.ok) form.current?.reset();
  }, [state]);
  return (
    <form action={action} ref={form} className="episode-form">
      <input type="hidden" name="id" value={id} />
      <div className="field">
        <label htmlFor="episode-note">Add a note</label>
        <textarea id="episode-note" name="body" rows={3} required maxLength={5000} />
      </div>
      <button type="submit" disabled={pending}>
        {pending ? "Adding…" : "Add note"}
      </button>
      <Result state={state} />
    </form>
  );
}
