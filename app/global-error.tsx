"use client";

/** Last resort when the root layout itself fails: a plain page with the reference. */
export default function GlobalError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <html lang="en">
      <body>
        <main id="main" style={{ maxWidth: "40rem", margin: "2rem auto", fontFamily: "system-ui, sans-serif" }}>
          <h1>Linemix is not available right now</h1>
          <p>Please try again in a moment. If it keeps happening, tell the administrator.</p>
          {error.digest && <p>Reference: {error.digest}</p>}
          <button type="button" onClick={() => reset()}>
            Try again
          </button>
        </main>
      </body>
    </html>
  );
}
