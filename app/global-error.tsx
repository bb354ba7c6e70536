"use client";

import { troubleFromDigest } from "@/lib/db/errors";

/**
 * Last resort when the root layout itself fails: a plain page with the reference, and
 * the plain reason when it is a database condition (see app/error.tsx).
 */
export default function GlobalError({ error, retry, reset }: { error: Error & { digest?: string }; retry?: () => void; reset: () => void }) {
  const trouble = troubleFromDigest(error?.digest);
  return (
    <html lang="en">
      <body>
        <main id="main" style={{ maxWidth: "40rem", margin: "2rem auto", fontFamily: "system-ui, sans-serif" }}>
          <h1>Linemix is not available right now</h1>
          <p>{trouble ? trouble.message : "Please try again in a moment. If it keeps happening, tell the administrator."}</p>
          {error?.digest && <p>Reference: {error.digest}</p>}
          <button type="button" onClick={() => (retry ?? reset)()}>
            Try again
          </button>
        </main>
      </body>
    </html>
  );
}
