"use client";

import { useEffect } from "react";
import { troubleFromDigest } from "@/lib/db/errors";

/**
 * Shown when a page fails on the server or in the browser. Production builds hide the
 * message of server errors and pass only the digest; a failure because the database is
 * full, read-only or busy carries a digest naming that condition (markDatabaseTrouble in
 * lib/db/errors.ts, applied to every Prisma query), so the page can say what happened in
 * plain words. Any other digest is the reference the server log carries.
 */
export default function ErrorPage({
  error,
  retry,
  reset,
}: {
  error: Error & { digest?: string };
  retry?: () => void;
  reset: () => void;
}) {
  useEffect(() => {
    console.error(error);
  }, [error]);
  const trouble = troubleFromDigest(error?.digest);
  // retry (Next 16.3+) fetches the server part again; reset only re-renders what the browser has.
  const again = retry ?? reset;
  return (
    <section className="card" role="alert" data-database-condition={trouble?.kind}>
      <h1>{trouble?.kind === "busy" ? "The database is busy" : trouble ? "This page could not be shown" : "Something went wrong"}</h1>
      <p>{trouble ? trouble.message : "This page could not be shown. Nothing you entered was lost unless the page said so; you can try again."}</p>
      {error?.digest && (
        <p className="muted">
          Reference for the administrator: <code className="mono">{error.digest}</code>
        </p>
      )}
      <button type="button" onClick={() => again()}>
        Try again
      </button>
    </section>
  );
}
