"use client";

import { useRef, useState } from "react";
import type { ImportPreview } from "@/lib/intake/import-http";

type State =
  | { phase: "idle" }
  | { phase: "working"; what: string }
  | { phase: "result"; preview: ImportPreview; file: File }
  | { phase: "error"; message: string };

const fmt = (n: number) => n.toLocaleString("en");

async function upload(file: File, query: string): Promise<ImportPreview | string> {
  let response: Response;
  try {
    response = await fetch(`/api/v1/imports?${query}`, {
      method: "POST",
      credentials: "same-origin",
      headers: { "content-type": "text/csv", "x-file-name": encodeURIComponent(file.name) },
      body: file,
    });
  } catch {
    return "No connection to the server; nothing was imported.";
  }
  const body = (await response.json().catch(() => ({}))) as ImportPreview & { error?: string; reference?: string };
  if (response.status === 200 || response.status === 201 || response.status === 422) return body;
  return body.error ? `${body.error}${body.reference ? ` (reference ${body.reference})` : ""}` : `The server answered ${response.status}.`;
}

/** Check (preview) then import the very same bytes. */
export function ImportForm({ canAddMissing }: { canAddMissing: boolean }) {
  const [state, setState] = useState<State>({ phase: "idle" });
  const [addMissing, setAddMissing] = useState(false);
  const [force, setForce] = useState(false);
  const fileRef = useRef<HTMLInputElement>(null);
  const resultRef = useRef<HTMLDivElement>(null);

  const options = () => `${addMissing ? "&addMissing=1" : ""}${force ? "&force=1" : ""}`;
  const show = (next: State) => {
    setState(next);
    requestAnimationFrame(() => resultRef.current?.focus());
  };

  async function check() {
    const file = fileRef.current?.files?.[0];
    if (!file) return show({ phase: "error", message: "Choose a file first." });
    setState({ phase: "working", what: "Checking…" });
    const result = await upload(file, `dryRun=1${options()}`);
    show(typeof result === "string" ? { phase: "error", message: result } : { phase: "result", preview: result, file });
  }

  async function commit(preview: ImportPreview, file: File) {
    setState({ phase: "working", what: `Importing ${fmt(preview.rows)} rows…` });
    const result = await upload(file, `expect=${preview.contentHash}${options()}`);
    show(typeof result === "string" ? { phase: "error", message: result } : { phase: "result", preview: result, file });
  }

  const preview = state.phase === "result" ? state.preview : null;
  return (
    <>
      <form
        className="card"
        onSubmit={(e) => {
          e.preventDefault();
          void check();
        }}
      >
        <div className="field">
          <label htmlFor="import-file">CSV file</label>
          <input id="import-file" ref={fileRef} type="file" accept=".csv,text/csv" required onChange={() => setState({ phase: "idle" })} />
        </div>
        {canAddMissing && (
          <label className="checkbox">
            <input type="checkbox" checked={addMissing} onChange={(e) => setAddMissing(e.target.checked)} />
            Create unknown lines, shifts, categories and products (named by their code)
          </label>
        )}
        <label className="checkbox">
          <input type="checkbox" checked={force} onChange={(e) => setForce(e.target.checked)} />
          Import again even if this exact file was imported before (counts it twice)
        </label>
        <button type="submit" disabled={state.phase === "working"}>
          Check file
        </button>
      </form>

      <div ref={resultRef} tabIndex={-1} aria-live="polite" className="import-result">
        {state.phase === "working" && <p role="status">{state.what}</p>}
        {state.phase === "error" && (
          <p className="error-text" role="alert">
            {state.message}
          </p>
        )}
        {preview && preview.status === "refused" && (
          <div role="alert">
            <h2>Refused: {fmt(preview.problemCount)} problem{preview.problemCount === 1 ? "" : "s"} — nothing was imported</h2>
            <p>Fix the file and check it again. Line numbers count the header as line 1.</p>
            <ul className="import-problems">
              {preview.problems.map((p) => (
                <li key={p}>{p}</li>
              ))}
            </ul>
            {preview.problemCount > preview.problems.length && <p className="muted">… and {fmt(preview.problemCount - preview.problems.length)} more.</p>}
          </div>
        )}
        {preview && preview.status !== "refused" && (
          <section aria-labelledby="preview-title">
            <h2 id="preview-title">
              {preview.status === "imported" ? `Imported as batch #${preview.batchId}` : "Ready to import"}: {fmt(preview.rows)}{" "}
              {preview.kind === "units" ? "inspected-units" : "tally"} rows
            </h2>
            <p>
              {preview.summary.firstDate} to {preview.summary.lastDate}, {fmt(preview.summary.total)} {preview.kind === "units" ? "units" : "defects"} in total.
            </p>
            {preview.duplicateOf && (
              <p className="caution">This exact file was imported before (batch #{preview.duplicateOf.batchId}); it is imported again because you asked to.</p>
            )}
            {Object.entries(preview.created).some(([, v]) => v.length > 0) && (
              <p className="caution">
                {preview.status === "imported" ? "Created" : "Will create"}:{" "}
                {Object.entries(preview.created)
                  .filter(([, v]) => v.length)
                  .map(([k, v]) => `${k} ${v.join(", ")}`)
                  .join("; ")}
                .
              </p>
            )}
            {preview.existingEntries > 0 && preview.status === "checked" && (
              <p className="caution">
                {fmt(preview.existingEntries)} entries are already recorded on these lines in this date span; imported counts are added to them.
              </p>
            )}
            <table className="data">
              <thead>
                <tr>
                  <th scope="col">Line</th>
                  <th scope="col" className="num">
                    Rows
                  </th>
                  <th scope="col" className="num">
                    {preview.kind === "units" ? "Units" : "Defects"}
                  </th>
                </tr>
              </thead>
              <tbody>
                {preview.summary.perLine.map((l) => (
                  <tr key={l.line}>
                    <td>{l.line}</td>
                    <td className="num">{fmt(l.rows)}</td>
                    <td className="num">{fmt(l.total)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
            <h3>First rows</h3>
            <div className="table-scroll">
              <table className="data">
                <thead>
                  <tr>
                    {preview.header.map((h, i) => (
                      <th key={`${h}-${i}`} scope="col">
                        {h}
                      </th>
                    ))}
                  </tr>
                </thead>
                <tbody>
                  {preview.sample.map((row, i) => (
                    <tr key={i}>
                      {row.map((cell, j) => (
                        <td key={j}>{cell}</td>
                      ))}
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
            {preview.status === "checked" && state.phase === "result" && (
              <p>
                <button type="button" onClick={() => void commit(preview, state.file)}>
                  Import {fmt(preview.rows)} rows
                </button>
              </p>
            )}
          </section>
        )}
      </div>
    </>
  );
}
