import { expect, type Page } from "@playwright/test";

/** The demo accounts made by `npm run demo` (lib/auth/demo-accounts.ts). Demo only. */
export const DEMO_USERS = {
  admin: { username: "admin", password: "demo-admin-pass", displayName: "Demo Admin" },
  engineer: { username: "engineer", password: "demo-engineer-pass", displayName: "Demo Engineer" },
  operator: { username: "operator", password: "demo-operator-pass", displayName: "Demo Operator" },
} as const;
export const DEMO_BADGE = { badge: "1001", pin: "2468", displayName: "Demo Operator" } as const;

export type DemoRole = keyof typeof DEMO_USERS;

/**
 * Signs in through the sign-in page with a demo account; resolves once the browser has
 * left /signin (operators land on /entry, others on the overview or `next`).
 */
export async function signIn(page: Page, role: DemoRole, next?: string): Promise<void> {
  const user = DEMO_USERS[role];
  await page.goto(next ? `/signin?next=${encodeURIComponent(next)}` : "/signin");
  await page.getByLabel("User name").fill(user.username);
  await page.getByLabel("Password", { exact: true }).fill(user.password);
  await page.getByRole("button", { name: "Sign in", exact: true }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/signin"));
  await expect(page.locator(".header-user")).toContainText(user.displayName);
}

/** Signs in with the demo operator's badge and PIN (a floor-only session); lands on /entry. */
export async function signInBadge(page: Page): Promise<void> {
  await page.goto("/signin?mode=badge");
  await page.getByRole("tab", { name: "Badge and PIN" }).click();
  await page.getByLabel("Badge number").fill(DEMO_BADGE.badge);
  await page.getByLabel("PIN", { exact: true }).fill(DEMO_BADGE.pin);
  await page.getByRole("button", { name: "Sign in with badge" }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/signin"));
  await expect(page.locator(".header-user")).toContainText("badge");
}

/** Signs out with the header's button. */
export async function signOut(page: Page): Promise<void> {
  await page.getByRole("button", { name: "Sign out" }).click();
  await page.waitForURL((url) => url.pathname.startsWith("/signin"));
}
