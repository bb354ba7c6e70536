"use client";

import { useEffect } from "react";

/**
 * Shown when a page fails on the server or in the browser. Production builds hide the
 * message of server errors; the digest is the reference the server log carries, so a
 * user can quote it to the administrator.
 */
export default function ErrorPage({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  useEffect(() => {
    console.error(error);
  }, [error]);
  return (
    <section className="card" role="alert">
      <h1>Something went wrong</h1>
      <p>This page could not be shown. Nothing you entered was lost unless the page said so; you can try again.</p>
      {error.digest && (
        <p className="muted">
          Reference for the administrator: <code className="mono">{error.digest}</code>
        </p>
      )}
      <button type="button" onClick={() => reset()}>
        Try again
      </button>
    </section>
  );
}
