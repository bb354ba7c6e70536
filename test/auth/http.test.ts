import { afterEach, describe, expect, it, vi } from "vitest";
import { AuthError } from "@/lib/auth/access";
import { safeNext } from "@/lib/auth/next-path";
import { isSameOrigin } from "@/lib/auth/origin";
import { withErrorHandling } from "@/lib/http/errors";
import { contentSecurityPolicy, newNonce } from "@/lib/http/security-headers";

afterEach(() => vi.restoreAllMocks());

describe("withErrorHandling", () => {
  it("logs [error <id>] and answers 500 with only the reference", async () => {
    const log = vi.spyOn(console, "error").mockImplementation(() => {});
    const handler = withErrorHandling(async (_request: Request) => {
      throw new Error("SQLITE_BUSY: database is locked at /secret/path");
    });
    const response = await handler(new Request("http://x/api/thing", { method: "POST" }));
    expect(response.status).toBe(500);
    const body = (await response.json()) as { error: string; reference: string };
    expect(body.error).toBe("Internal error");
    expect(JSON.stringify(body)).not.toContain("SQLITE");
    expect(log.mock.calls[0][0]).toBe(`[error ${body.reference}] POST /api/thing`);
  });

  it("turns an AuthError into its status and passes normal responses through", async () => {
    const refused = withErrorHandling(async (_r: Request) => {
      throw new AuthError(403);
    });
    expect((await refused(new Request("http://x/"))).status).toBe(403);
    const fine = withErrorHandling((_r: Request) => Response.json({ ok: 1 }));
    expect(await (await fine(new Request("http://x/"))).json()).toEqual({ ok: 1 });
  });
});

describe("redirect after sign-in", () => {
  it("keeps same-site relative paths only", () => {
    expect(safeNext("/episodes?status=new#top")).toBe("/episodes?status=new#top");
    for (const bad of ["//evil.example", "/\\evil.example", "https://evil.example/", "javascript:alert(1)", "evil", "/\t/evil", "/signin?next=/x", ""]) {
      expect(safeNext(bad), bad).toBe("/");
    }
  });
});

describe("same-origin check", () => {
  it("compares Origin with Host (or X-Forwarded-Host)", () => {
    expect(isSameOrigin(new Headers({ host: "a:3000", origin: "http://a:3000" }))).toBe(true);
    expect(isSameOrigin(new Headers({ host: "a:3000", origin: "http://a:3001" }))).toBe(false);
    expect(isSameOrigin(new Headers({ host: "a:3000", origin: "null" }))).toBe(false);
    expect(isSameOrigin(new Headers({ host: "a:3000", "sec-fetch-site": "same-origin" }))).toBe(true);
    expect(isSameOrigin(new Headers({ host: "a:3000", "sec-fetch-site": "cross-site" }))).toBe(false);
  });
});

describe("content security policy", () => {
  it("allows scripts only by a fresh nonce and refuses framing, plugins and foreign forms", () => {
    const a = newNonce();
    expect(a).not.toBe(newNonce());
    const csp = contentSecurityPolicy(a);
    expect(csp).toContain(`script-src 'self' 'nonce-${a}' 'strict-dynamic'`);
    expect(csp).not.toMatch(/script-src[^;]*unsafe-inline/);
    for (const d of ["frame-ancestors 'none'", "object-src 'none'", "base-uri 'self'", "form-action 'self'", "img-src 'self' data: blob:"]) {
      expect(csp).toContain(d);
    }
    expect(csp).not.toContain("unsafe-eval");
    expect(contentSecurityPolicy(a, { dev: true })).toContain("'unsafe-eval'");
  });
});
