import { expect, test, type ConsoleMessage, type Page } from "@playwright/test";
import { signIn, signInBadge, signOut } from "./helpers/auth";

/** Collects console messages that report a CSP violation or a failed hydration. */
function watchConsole(page: Page): string[] {
  const problems: string[] = [];
  page.on("console", (msg: ConsoleMessage) => {
    const text = msg.text();
    if (/Content Security Policy|Refused to (execute|load|apply)|hydrat/i.test(text)) problems.push(text);
  });
  page.on("pageerror", (error) => problems.push(String(error)));
  return problems;
}

test("without a session, a page sends to sign-in and back to it afterwards", async ({ page }) => {
  const problems = watchConsole(page);
  await page.goto("/admin/tokens");
  await expect(page).toHaveURL(/\/signin\?next=%2Fadmin%2Ftokens$/);
  await page.getByLabel("User name").fill("admin");
  await page.getByLabel("Password", { exact: true }).fill("demo-admin-pass");
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page).toHaveURL(/\/admin\/tokens$/);
  await expect(page.getByRole("heading", { level: 1, name: "API tokens" })).toBeVisible();
  expect(problems).toEqual([]);
});

test("a wrong password gets one generic message", async ({ page }) => {
  await page.goto("/signin");
  await page.getByLabel("User name").fill("engineer");
  await page.getByLabel("Password", { exact: true }).fill("not-the-password");
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page.locator(".error-text")).toHaveText("That name and password do not match an active account.");
  await page.getByLabel("User name").fill("nobody-here");
  await page.getByLabel("Password", { exact: true }).fill("not-the-password");
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await expect(page.locator(".error-text")).toHaveText("That name and password do not match an active account.");
});

test("an off-site next is ignored after sign-in", async ({ page }) => {
  await page.goto("/signin?next=%2F%2Fevil.example%2Fx");
  await page.getByLabel("User name").fill("engineer");
  await page.getByLabel("Password", { exact: true }).fill("demo-engineer-pass");
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/signin"));
  const landed = new URL(page.url());
  expect(landed.host).toBe(new URL(test.info().project.use.baseURL!).host);
  expect(landed.pathname).toBe("/");
});

test("responses carry a nonce CSP and security headers, and pages still hydrate", async ({ page }) => {
  const problems = watchConsole(page);
  await signIn(page, "admin");
  const response = await page.goto("/admin/users");
  const headers = response!.headers();
  const csp = headers["content-security-policy"];
  expect(csp).toMatch(/script-src 'self' 'nonce-[A-Za-z0-9+/=]+' 'strict-dynamic'/);
  expect(csp).toContain("frame-ancestors 'none'");
  expect(csp).toContain("object-src 'none'");
  expect(csp).toContain("base-uri 'self'");
  expect(csp).toContain("form-action 'self'");
  expect(csp).not.toContain("unsafe-eval");
  expect(headers["x-content-type-options"]).toBe("nosniff");
  expect(headers["x-frame-options"]).toBe("DENY");
  expect(headers["referrer-policy"]).toBe("strict-origin-when-cross-origin");
  expect(headers["permissions-policy"]).toContain("camera=()");
  // The nonce differs per request.
  const again = (await page.request.get("/signin")).headers()["content-security-policy"];
  expect(again).not.toBe(csp);

  // Hydration: a client component reacts (the create form's pending state and typed result).
  await page.getByLabel("User name").fill("Not a name!");
  await page.getByLabel("Initial password (12+ characters)").fill("long-enough-password");
  await page.getByRole("button", { name: "Create user" }).click();
  await expect(page.locator(".error-text")).toContainText("A user name is 2-40 letters");
  // The tab switch on the sign-in page is client-side too.
  await page.goto("/signin");
  await page.getByRole("tab", { name: "Badge and PIN" }).click();
  await expect(page.getByLabel("Badge number")).toBeVisible();
  expect(problems).toEqual([]);
});

test("the header shows only what the role may use", async ({ page }) => {
  await page.goto("/signin");
  await expect(page.getByRole("navigation", { name: "Main" })).toHaveCount(0);

  await signIn(page, "operator");
  await expect(page).toHaveURL(/\/entry/);
  const nav = page.getByRole("navigation", { name: "Main" });
  await expect(nav.getByRole("link")).toHaveText(["Floor entry", "Corrections"]);
  await expect(page.locator(".header-user")).toContainText("Operator");
  await signOut(page);

  await signIn(page, "engineer");
  await expect(nav.getByRole("link", { name: "Setup" })).toHaveCount(0);
  await expect(nav.getByRole("link", { name: "Users & tokens" })).toHaveCount(0);
  await expect(nav.getByRole("link", { name: "Import" })).toBeVisible();
  await signOut(page);

  await signIn(page, "admin");
  await expect(nav.getByRole("link", { name: "Setup" })).toBeVisible();
  await expect(nav.getByRole("link", { name: "Users & tokens" })).toBeVisible();
});

test("an operator is refused admin and engineer pages, and the admin form's action", async ({ browser }) => {
  const context = await browser.newContext();
  const adminPage = await context.newPage();
  await signIn(adminPage, "admin");
  await adminPage.goto("/admin/users");
  await expect(adminPage.getByRole("heading", { level: 1, name: "Users" })).toBeVisible();

  // The same browser now signs in as an operator in another tab: the cookie is replaced.
  const operatorPage = await context.newPage();
  await signIn(operatorPage, "operator");
  // (Every other route is walked for every role in auth-walk.spec.ts.)
  for (const path of ["/admin/tokens", "/admin/users", "/admin/users/1"]) {
    await operatorPage.goto(path);
    const url = new URL(operatorPage.url());
    expect(url.pathname, path).toBe("/forbidden");
  }
  await expect(operatorPage.getByRole("heading", { name: "Not allowed" })).toBeVisible();
  await operatorPage.goto("/");
  expect(new URL(operatorPage.url()).pathname).toBe("/entry");

  // The admin tab still shows the form; posting it now runs with the operator's session.
  await adminPage.getByLabel("User name").fill("sneaky");
  await adminPage.getByLabel("Initial password (12+ characters)").fill("sneaky-password-123");
  await adminPage.getByRole("button", { name: "Create user" }).click();
  await expect(adminPage.locator(".error-text")).toContainText("Your role does not allow this.");
  await context.close();

  // And the user was not made.
  const page = await browser.newPage();
  await signIn(page, "admin");
  await page.goto("/admin/users");
  await expect(page.getByRole("link", { name: "sneaky" })).toHaveCount(0);
  await page.close();
});

test("admin creates an API token, sees it once, it works on an API, and revoking ends it", async ({ page, request }) => {
  await signIn(page, "admin");
  await page.goto("/admin/tokens");
  await page.getByLabel("Name (what uses it)").fill("Browser test gateway");
  await page.getByRole("checkbox", { name: /analysis:read/ }).check();
  await page.getByRole("button", { name: "Create token" }).click();
  const secret = (await page.getByTestId("new-token").textContent())!.trim();
  expect(secret).toMatch(/^lmx_[A-Za-z0-9_-]{43}$/);
  await expect(page.getByText(/Token "Browser test gateway" created/)).toBeVisible();
  await page.screenshot({ path: test.info().outputPath("admin-token-created.png"), fullPage: true });
  await page.reload();
  await expect(page.getByText(secret)).toHaveCount(0);
  const row = page.getByRole("row", { name: /Browser test gateway/ });
  await expect(row).toContainText(secret.slice(0, 10));
  await expect(row).toContainText("never");

  const health = await request.get("/api/health");
  expect(health.status()).toBe(200);
  // The start-up scan warm-up reports itself (the demo's scans are few and small).
  const { scans } = (await health.json()) as { scans: { state: string; ready: number; total: number } };
  expect(["warming", "ready"]).toContain(scans.state);
  expect(scans.total).toBeGreaterThan(0);

  page.once("dialog", (dialog) => dialog.accept());
  await row.getByRole("button", { name: "Revoke" }).click();
  await expect(row).toContainText("Revoked");
});

test("badge sign-in is for floor entry only", async ({ page }) => {
  await signInBadge(page);
  await expect(page).toHaveURL(/\/entry/);
  await page.goto("/");
  await expect(page).toHaveURL(/\/entry/);
  await page.goto("/admin/users");
  await expect(page).toHaveURL(/\/forbidden/);
});

test("sign-out ends the session on the server", async ({ page }) => {
  await signIn(page, "engineer");
  const cookies = await page.context().cookies();
  const session = cookies.find((c) => c.name === "linemix_session")!;
  expect(session.httpOnly).toBe(true);
  expect(session.sameSite).toBe("Lax");
  await signOut(page);
  // Putting the old cookie back does not help: the session was revoked.
  await page.context().addCookies([session]);
  await page.goto("/");
  await expect(page).toHaveURL(/\/signin/);
});

test("a wrong PIN five times locks the badge", async ({ page }) => {
  // Runs last: it locks the demo badge for 15 minutes.
  await page.goto("/signin?mode=badge");
  for (let i = 1; i <= 5; i++) {
    await page.getByLabel("Badge number").fill("1001");
    await page.getByLabel("PIN", { exact: true }).fill("0000");
    // Wait for each answer: React resets the form when an action ends, so typing during one would be lost.
    const answered = page.waitForResponse((r) => r.request().method() === "POST" && new URL(r.url()).pathname === "/signin");
    await page.getByRole("button", { name: "Sign in with badge" }).click();
    await answered;
    // The answer's render resets the form; until then the previous attempt's message is
    // still on screen, so wait for the reset before reading the message or typing again.
    await expect(page.getByLabel("PIN", { exact: true })).toHaveValue("");
    await expect(page.locator(".error-text")).toContainText(i < 5 ? "do not match" : "locked");
  }
  await page.getByLabel("Badge number").fill("1001");
  await page.getByLabel("PIN", { exact: true }).fill("2468");
  await page.getByRole("button", { name: "Sign in with badge" }).click();
  await expect(page.locator(".error-text")).toContainText("locked");
});
