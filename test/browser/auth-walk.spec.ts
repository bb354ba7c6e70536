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
 *   APIs    /api/health (and OPEN_BY_DESIGN): anyone;  writes to /api/v1/tallies,
 *           floor-sheets, inspections: tallies:write (operator, badge ok);  /api/admin…: admin;
 *           every other request: analysis:read (engineer).
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

/** Open without sign-in by decision of the route's owner, with the reason. Keep this list short. */
const OPEN_BY_DESIGN: Record<string, string> = {
  "/api/v1/openapi.json": "the API description generated from the request schemas; it holds no plant data",
};

/** Writing tallies (floor sheets, inspections) is tallies:write (operator, badge ok); reading anything is analysis:read. */
function apiNeed(route: string, method: string): Need {
  if (route === "/api/health" || route in OPEN_BY_DESIGN) return "public";
  if (/^\/api\/admin(\/|$)/.test(route)) return "admin";
  const write = method !== "GET" && method !== "HEAD";
  if (write && /^\/api\/v\d+\/(tallies|floor-sheets|inspections)(\/|$)/.test(route)) return "floor";
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
      else if (status >= 500) crashed(`${principal} ${url}: HTTP ${status}`);
    } else {
      const expected = principal === "none" || principal === "bogus" ? ["/signin"] : ["/forbidden", "/entry"];
      if (!expected.includes(final)) problems.push(`${principal} ${url}: ended at ${final} (HTTP ${status}), expected ${expected.join(" or ")}`);
    }
  }
}

/** A page that crashes after its guard let the principal in is not an access problem: noted, not failed. */
function crashed(what: string): void {
  test.info().annotations.push({ type: "server error after access was granted", description: what });
  console.warn(`auth walk: ${what}`);
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
    // Route handlers outside /api (downloads opened by the browser) may also refuse by
    // redirecting to /signin or /forbidden, as pages do; the proxy does so for a GET without a cookie.
    const browserFacing = !url.startsWith("/api/");
    const refusal = who.startsWith("none") ? 401 : 403;
    for (const method of METHODS) {
      const need = apiNeed(route, method);
      if (isAllowed(need)) {
        // Requests that should pass are sent only when safe (GET): no garbage writes into the demo data.
        if (method !== "GET") continue;
        const r = await request.fetch(url, { method, headers: extraHeaders, maxRedirects: 0 });
        if (r.status() === 401 || r.status() === 403) problems.push(`${who} GET ${url}: ${r.status()}, expected access`);
        if (r.status() >= 500) crashed(`${who} GET ${url}: HTTP ${r.status()}`);
        continue;
      }
      const r = await request.fetch(url, {
        method,
        headers: { origin: baseURL, "content-type": "application/json", ...extraHeaders },
        data: method === "GET" ? undefined : "{}",
        maxRedirects: 0,
      });
      const status = r.status();
      const location = r.headers()["location"] ?? "";
      const redirected = browserFacing && status >= 300 && status < 400 && /\/(signin|forbidden)/.test(location);
      if (!(redirected || status === refusal || status === 401 || status === 405)) {
        problems.push(`${who} ${method} ${url}: HTTP ${status}, expected ${refusal} (or 405 when the method does not exist)`);
      }
    }
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
    // With the nonce CSP on, every page must still load its scripts and hydrate.
    page.on("console", (msg) => {
      if (/Content Security Policy|Refused to (execute|load|apply|connect)/i.test(msg.text())) problems.push(`${principal} CSP at ${page.url()}: ${msg.text()}`);
    });
    page.on("pageerror", (error) => problems.push(`${principal} script error at ${page.url()}: ${error.message}`));
    await checkPages(page, principal, problems);
    await checkApis(page.request, principal, (need) => allowed(principal, need), problems, baseURL!);
    await checkActions(page.request, principal, problems, baseURL!);
    await page.context().close();
    expect(problems, problems.join("\n")).toEqual([]);
  });
}

/** Creates a token on the admin page and returns its secret (shown once). */
async function createToken(admin: Page, name: string, scope: RegExp): Promise<string> {
  await admin.goto("/admin/tokens");
  await admin.getByLabel("Name (what uses it)").fill(name);
  await admin.getByRole("checkbox", { name: scope }).check();
  await admin.getByRole("button", { name: "Create token" }).click();
  return (await admin.getByTestId("new-token").textContent())!.trim();
}

/** Revokes the named token on the admin page. */
async function revokeToken(admin: Page, name: string): Promise<void> {
  await admin.goto("/admin/tokens");
  admin.once("dialog", (d) => d.accept());
  await admin.getByRole("row", { name: new RegExp(name) }).getByRole("button", { name: "Revoke" }).click();
  await expect(admin.getByRole("row", { name: new RegExp(name) })).toContainText("Revoked");
}

test("API tokens: a tallies:write token reaches only tallies routes; a revoked token nothing", async ({ browser, baseURL, playwright }) => {
  const admin = await principalPage(browser, "admin", baseURL!);
  const token = await createToken(admin, "walk gateway", /tallies:write/);

  const machine = await playwright.request.newContext({ baseURL });
  const problems: string[] = [];
  const bearer = { authorization: `Bearer ${token}` };
  await checkApis(machine, "token tallies:write", (need) => need === "public" || need === "floor", problems, baseURL!, bearer);
  // It does write: an empty floor sheet passes the guard and fails validation (400), not 401/403.
  const write = await machine.post("/api/v1/tallies", { headers: { ...bearer, "content-type": "application/json" }, data: "{}" });
  expect([400, 422]).toContain(write.status());
  // A token opens no page: pages need a session.
  const pageResponse = await machine.get("/admin/users", { headers: bearer, maxRedirects: 0 });
  expect([307, 308]).toContain(pageResponse.status());

  await revokeToken(admin, "walk gateway");
  await checkApis(machine, "none (revoked token)", (need) => need === "public", problems, baseURL!, bearer);
  await machine.dispose();
  await admin.context().close();
  expect(problems, problems.join("\n")).toEqual([]);
});

test("API tokens: an analysis:read token downloads flagged periods' exports, and still opens no page", async ({ browser, baseURL, playwright }) => {
  const admin = await principalPage(browser, "admin", baseURL!);
  const token = await createToken(admin, "walk report job", /analysis:read/);
  const machine = await playwright.request.newContext({ baseURL });
  const bearer = { authorization: `Bearer ${token}` };

  const list = await machine.get("/episodes/export/json", { headers: bearer, maxRedirects: 0 });
  expect(list.status()).toBe(200);
  const { episodes } = (await list.json()) as { episodes: { id: number }[] };
  expect(episodes.length).toBeGreaterThan(0);
  for (const format of ["csv", "json", "pdf"]) {
    const r = await machine.get(`/episodes/${episodes[0].id}/export/${format}`, { headers: bearer, maxRedirects: 0 });
    expect(r.status(), format).toBe(200);
    expect(r.headers()["content-disposition"]).toContain(`linemix-episode-${episodes[0].id}.${format}`);
  }
  // The same token is no session: the flagged period's page still sends it to sign-in.
  const pageResponse = await machine.get(`/episodes/${episodes[0].id}`, { headers: bearer, maxRedirects: 0 });
  expect(pageResponse.status()).toBe(307);
  // Without the token the download is sent to sign-in as before.
  const anonymous = await machine.get(`/episodes/${episodes[0].id}/export/csv`, { maxRedirects: 0 });
  expect(anonymous.status()).toBe(307);

  await revokeToken(admin, "walk report job");
  const afterRevoke = await machine.get(`/episodes/${episodes[0].id}/export/csv`, { headers: bearer, maxRedirects: 0 });
  expect(afterRevoke.status()).toBe(401);
  await machine.dispose();
  await admin.context().close();
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
