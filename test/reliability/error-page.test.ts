import { createElement } from "react";
import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, it } from "vitest";
import ErrorPage from "@/app/error";
import GlobalError from "@/app/global-error";
import { markDatabaseTrouble } from "@/lib/db/errors";

/**
 * What the error pages say, given what production gives them: a generic message and the
 * digest. A database condition's digest (markDatabaseTrouble) turns into its plain
 * message; any other digest stays a bare reference.
 */

function productionError(digest: string): Error & { digest: string } {
  // As Next hands a server error to the browser in production: the message is replaced.
  return Object.assign(new Error("An error occurred in the Server Components render. The specific message is omitted in production builds."), { digest });
}

const render = (error: Error & { digest?: string }) => renderToStaticMarkup(createElement(ErrorPage, { error, reset: () => undefined }));

describe("app/error.tsx", () => {
  it("says plainly that the database is read-only, full or busy, with the reference", () => {
    const readOnly = markDatabaseTrouble({ code: "SQLITE_READONLY" } as { code: string; digest?: string }).digest!;
    const html = render(productionError(readOnly));
    expect(html).toContain("The database is read-only at the moment");
    expect(html).toContain(readOnly);
    expect(html).toContain('data-database-condition="read-only"');
    expect(html).not.toContain("Something went wrong");

    const full = markDatabaseTrouble({ code: "SQLITE_FULL" } as { code: string; digest?: string }).digest!;
    expect(render(productionError(full))).toContain("The database is full (no space left on the server&#x27;s disk)");
    const busy = render(productionError("linemix-db-busy-0a1b2c3d"));
    expect(busy).toContain("<h1>The database is busy</h1>");
    expect(busy).toContain("try again in a few seconds");
  });

  it("keeps the generic page for any other error, and never shows the hidden message", () => {
    const html = render(productionError("2481116385"));
    expect(html).toContain("Something went wrong");
    expect(html).toContain("2481116385");
    expect(html).not.toContain("Nothing was stored");
    expect(html).not.toContain("Server Components render");
  });

  it("global-error.tsx gives the plain message too", () => {
    const html = renderToStaticMarkup(createElement(GlobalError, { error: productionError("linemix-db-full-0a1b2c3d"), reset: () => undefined }));
    expect(html).toContain("The database is full");
    expect(html).toContain("linemix-db-full-0a1b2c3d");
  });
});
