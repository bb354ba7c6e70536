import { readFileSync } from "node:fs";
import path from "node:path";
import { expect, test, type APIRequestContext, type Browser, type Page } from "@playwright/test";
import { signIn, signInBadge } from "./helpers/auth";

/**
 * Walks every route of the build with every kind of principal: no session, a bogus
 * cookie, a badge session, operator, engineer, admin, and an API token. The routes come
 * from <distDir>/app-path-routes-manifest.json and the server actions from
 * <distDir>/server/server-reference-manifest.json, so new pages and actions are covered
 * without editing this file. Expected access follows from the path:
 *   pages   /signin, /forbidden: anyone;  /entry…: operator (badge ok);
 *           /admin…, /setup…: admin;  everything else: engineer.
 *   APIs    /api/health: anyone;  …/tallies…: tallies:write (operator, badge ok);
 *           /api/admin…: admin;  everything else: analysis:read (engineer).
 *   actions app/signin: anyone; app/entry/**: operator; app/admin/**, app/setup/**: admin;
 *           others: engineer. Refused actions are posted without arguments: the guard
 *           must run before anything reads the form.
 * Dynamic segments get a demo id ("1"); a missing record answers 404, which still shows
 * that the guard let the principal through.
 */

type Principal = "none" | "bogus" | "badge" | "operator" | "engineer" | "admin";
type Need = "public" | "floor" | "engineer" | "admin";

const distDir = process.env.LINEMIX_DIST_DIR ?? ".next";
const routesManifest = JSON.parse(readFileSync(path.join(distDir, "app-path-routes-manifest.json"), "utf8")) as Record<string, string>;
const actionsManifest = JSON.parse(readFileSync(path.join(distDir, "server", "server-reference-manifest.json"), "utf8")) as {
  node: Record<string, { workers: Record<string, unknown>; filename?: string; exportedName?: string }>;
};

const SKIP = new Set(["/_not-found", "/_global-error"]);
const METADATA = /\/(favicon\.ico|robots\.txt|sitemap\.xml|manifest\.webmanifest|(opengraph|twitter)-image|icon|apple-icon)(\/|$)/;

function concrete(route: string): string {
  return route
    .replace(/\/\[\[\.\.\.[^\]]+\]\]/g, "")
    .replace(/\[\.\.\.[^\]]+\]/g, "x")
    .replace(/\[[^\]]+\]/g, "1") || "/";
}

const entries = Object.entries(routesManifest).filter(([, route]) => !SKIP.has(route) && !METADATA.test(route));
const pages = entries.filter(([key]) => key.endsWith("/page")).map(([, route]) => route);
const apis = entries.filter(([key]) => key.endsWith("/route")).map(([, route]) => route);

function pageNeed(route: string): Need {
  if (route === "/signin" || route === "/forbidden") return "public";
  if (/^\/(admin|setup)(\/|$)/.test(route)) return "admin";
  if (/^\/entry(\/|$)/.test(route)) return "floor";
  return "engineer";
}

function apiNeed(route: string): Need {
  if (route === "/api/health") return "public";
  if (/^\/api\/admin(\/|$)/.test(route)) return "admin";
  if (/\/tallies(\/|$)/.test(route)) return "floor";
  return "engineer";
}

function actionNeed(filename: string): Need {
  if (filename.startsWith("app/signin/")) return "public";
  if (/^app\/(admin|setup)\//.test(filename)) return "admin";
  if (filename.startsWith("app/entry/")) return "floor";
  return "engineer";
}

function allowed(principal: Principal, need: Need): boolean {
  if (need === "public") return true;
  switch (principal) {
    case "none":
    case "bogus":
      return false;
    case "badge":
      return need === "floor";
    case "operator":
      return need === "floor";
    case "engineer":
      return need !== "admin";
    case "admin":
      return true;
  }
}

async function principalPage(browser: Browser, principal: Principal, baseURL: string): Promise<Page> {
  const context = await browser.newContext({ baseURL });
  const page = await context.newPage();
  if (principal === "bogus") {
    // Passes the proxy's presence check: the guards themselves must refuse it.
    await context.addCookies([{ name: "linemix_session", value: "bogus-token-that-matches-nothing", url: baseURL }]);
  } else if (principal === "badge") {
    await signInBadge(page);
  } else if (principal !== "none") {
    await signIn(page, principal);
  }
  return page;
}

async function checkPages(page: Page, principal: Principal, problems: string[]): Promise<void> {
  for (const route of pages) {
    const url = concrete(route);
    const response = await page.goto(url);
    const final = new URL(page.url()).pathname;
    const status = response?.status() ?? 0;
    const need = pageNeed(route);
    if (allowed(principal, need)) {
      if (final === "/signin" && need !== "public") problems.push(`${principal} ${url}: sent to sign-in, expected access`);
      else if (final === "/forbidden" && need !== "public") problems.push(`${principal} ${url}: forbidden, expected access`);
      else if (status >= 500) problems.push(`${principal} ${url}: HTTP ${status}`);
    } else {
      const expected = principal === "none" || principal === "bogus" ? ["/signin"] : ["/forbidden", "/entry"];
      if (!expected.includes(final)) problems.push(`${principal} ${url}: ended at ${final} (HTTP ${status}), expected ${expected.join(" or ")}`);
    }
  }
}

const METHODS = ["GET", "POST", "PUT", "PATCH", "DELETE"] as const;

async function checkApis(
  request: APIRequestContext,
  who: string,
  isAllowed: (need: Need) => boolean,
  problems: string[],
  baseURL: string,
  extraHeaders: Record<string, string> = {},
): Promise<void> {
  for (const route of apis) {
    const url = concrete(route);
    const need = apiNeed(route);
    if (isAllowed(need)) {
      // Only safe requests where access is expected: no garbage writes into the demo data.
      const r = await request.fetch(url, { method: "GET", headers: extraHeaders, maxRedirects: 0 });
      if (r.status() === 401 || r.status() === 403) problems.push(`${who} GET ${url}: ${r.status()}, expected access`);
      if (r.status() >= 500) problems.push(`${who} GET ${url}: HTTP ${r.status()}`);
      continue;
    }
    const statuses: number[] = [];
    for (const method of METHODS) {
      const r = await request.fetch(url, {
        method,
        headers: { origin: baseURL, "content-type": "application/json", ...extraHeaders },
        data: method === "GET" ? undefined : "{}",
        maxRedirects: 0,
      });
      statuses.push(r.status());
    }
    const refusal = who.startsWith("none") ? 401 : 403;
    const ok = statuses.every((s) => s === refusal || s === 401 || s === 405) && statuses.includes(refusal);
    if (!ok) problems.push(`${who} ${url}: statuses ${METHODS.map((m, i) => `${m} ${statuses[i]}`).join(", ")}, expected ${refusal} (or 405)`);
  }
}

type ActionEntry = { id: string; filename: string; name: string; route: string };
const actions: ActionEntry[] = Object.entries(actionsManifest.node)
  .filter(([, a]) => a.filename && a.filename.startsWith("app/"))
  .map(([id, a]) => {
    const workers = Object.keys(a.workers)
      .filter((w) => w.endsWith("/page") && !w.includes("_not-found"))
      .map((w) => w.replace(/^app/, "").replace(/\/page$/, "") || "/");
    const route = workers.find((w) => !w.includes("[")) ?? workers[0] ?? "/";
    return { id, filename: a.filename!, name: a.exportedName ?? "?", route: concrete(route) };
  });

const REFUSED = /"status":(401|403)|Sign in to continue|Your role does not allow|Cross-site request refused|A badge sign-in is for floor entry only/;

async function checkActions(request: APIRequestContext, principal: Principal, problems: string[], baseURL: string): Promise<void> {
  for (const action of actions) {
    const need = actionNeed(action.filename);
    if (allowed(principal, need)) continue;
    const r = await request.post(action.route, {
      headers: { "next-action": action.id, origin: baseURL, "content-type": "text/plain;charset=UTF-8", accept: "text/x-component" },
      data: "[]",
      maxRedirects: 0,
    });
    const body = await r.text();
    if (process.env.WALK_DEBUG) console.log(principal, action.name, r.status(), JSON.stringify(body.slice(0, 400)));
    const toSignIn = r.status() >= 300 && r.status() < 400 && (r.headers()["location"] ?? "").includes("/signin");
    if (/"ok":true/.test(body) || !(REFUSED.test(body) || toSignIn || r.status() === 401 || r.status() === 403)) {
      problems.push(`${principal} action ${action.filename}#${action.name} via ${action.route}: not refused (HTTP ${r.status()}: ${body.slice(0, 160).replace(/\s+/g, " ")})`);
    }
  }
}

test.describe.configure({ mode: "serial" });

test("the manifest lists the routes this walk relies on", () => {
  expect(pages).toEqual(expect.arrayContaining(["/", "/signin", "/admin/users", "/admin/tokens"]));
  expect(apis).toContain("/api/health");
  expect(actions.map((a) => a.name)).toEqual(expect.arrayContaining(["createUserAction", "createTokenAction", "signOut"]));
  test.info().annotations.push({ type: "routes", description: `${pages.length} pages, ${apis.length} route handlers, ${actions.length} server actions` });
});

for (const principal of ["none", "bogus", "badge", "operator", "engineer", "admin"] as const) {
  test(`every route and action, as ${principal}`, async ({ browser, baseURL }) => {
    test.setTimeout(180_000);
    const page = await principalPage(browser, principal, baseURL!);
    const problems: string[] = [];
    await checkPages(page, principal, problems);
    await checkApis(page.request, principal, (need) => allowed(principal, need), problems, baseURL!);
    await checkActions(page.request, principal, problems, baseURL!);
    await page.context().close();
    expect(problems, problems.join("\n")).toEqual([]);
  });
}

test("API tokens: a tallies:write token reaches only tallies routes; a revoked token nothing", async ({ browser, baseURL, playwright }) => {
  const admin = await principalPage(browser, "admin", baseURL!);
  await admin.goto("/admin/tokens");
  await admin.getByLabel("Name (what uses it)").fill("walk gateway");
  await admin.getByRole("checkbox", { name: /tallies:write/ }).check();
  await admin.getByRole("button", { name: "Create token" }).click();
  const token = (await admin.getByTestId("new-token").textContent())!.trim();

  const machine = await playwright.request.newContext({ baseURL });
  const problems: string[] = [];
  const bearer = { authorization: `Bearer ${token}` };
  await checkApis(machine, "token tallies:write", (need) => need === "public" || need === "floor", problems, baseURL!, bearer);
  // A token opens no page: pages need a session.
  const pageResponse = await machine.get("/admin/users", { headers: bearer, maxRedirects: 0 });
  expect([307, 308]).toContain(pageResponse.status());

  await admin.reload();
  admin.once("dialog", (d) => d.accept());
  await admin.getByRole("row", { name: /walk gateway/ }).getByRole("button", { name: "Revoke" }).click();
  await expect(admin.getByRole("row", { name: /walk gateway/ })).toContainText("Revoked");
  await checkApis(machine, "none (revoked token)", (need) => need === "public", problems, baseURL!, bearer);
  await machine.dispose();
  await admin.context().close();
  expect(problems, problems.join("\n")).toEqual([]);
});

test("a cross-site post to an admin action is refused even with an admin session", async ({ browser, baseURL }) => {
  const admin = await principalPage(browser, "admin", baseURL!);
  const before = await admin.request.get("/admin/users");
  const createUser = actions.find((a) => a.name === "createUserAction")!;
  const r = await admin.request.post(createUser.route, {
    headers: { "next-action": createUser.id, origin: "https://evil.example", "content-type": "text/plain;charset=UTF-8" },
    data: "[]",
    maxRedirects: 0,
  });
  const body = await r.text();
  expect(body).not.toMatch(/"ok":true/);
  expect(r.status() >= 400 || REFUSED.test(body), `HTTP ${r.status()}: ${body.slice(0, 200)}`).toBe(true);
  expect(before.ok()).toBe(true);
  await admin.context().close();
});
