import { expect, test, type Page } from "@playwright/test";
import { mkdirSync } from "node:fs";
import path from "node:path";
import { addDays, localToday } from "../../lib/dates";
import { DEMO_STORIES } from "../../lib/demo/plant";
import { weekOf } from "../../lib/review/week";
import { signIn } from "./helpers/auth";

/**
 * The review screens on the demo plant: the planted mix change (P3 × seal-leak, about
 * 40 to 27 days before the last day) must be found by following the overview to the
 * flagged comparison, its episode and strongest window. Screenshots of each main screen
 * go to test-results/screenshots/ for a person to look at.
 */

const SHOTS = path.join("test-results", "screenshots");
mkdirSync(SHOTS, { recursive: true });

async function shot(page: Page, name: string) {
  await page.screenshot({ path: path.join(SHOTS, `${name}.png`), fullPage: true });
}

test.describe.configure({ mode: "serial" });

test.beforeEach(async ({ page }) => {
  await page.setViewportSize({ width: 1366, height: 900 });
  await signIn(page, "engineer");
});

test("overview → flagged comparison → episode → strongest window shows P3 × Seal leak beyond the critical value", async ({ page }) => {
  await page.goto("/");
  await expect(page.getByRole("heading", { level: 1, name: "Overview" })).toBeVisible();
  const lines = page.locator('tr[data-comparison="lines"]');
  await expect(lines).toBeVisible();
  // The across-lines comparison has found the planted change as an episode.
  await expect(lines.locator("td").last()).not.toHaveText("0");
  // Every review page says how current its results are (the scans may be a few seconds behind the floor).
  await expect(page.getByTestId("freshness")).toHaveText(/^Results as of \d{2}:\d{2}:\d{2}( · [\d,]+ entr(y|ies) since, being added)?$/);
  await shot(page, "overview");

  // The flagged-period records are made when their list is opened; after that the timeline links to the record.
  await page.goto("/episodes?comparison=lines");
  await expect(page.getByRole("heading", { level: 1, name: "Flagged periods" })).toBeVisible();
  await page.goto("/");
  await lines.getByRole("link", { name: "All lines compared" }).click();
  await expect(page).toHaveURL(/\/comparisons\/lines$/);
  await expect(page.getByRole("heading", { level: 1, name: "All lines compared" })).toBeVisible();
  await expect(page.locator('[data-chart="timeline"] svg').first()).toBeVisible();
  const episode = page.locator("tr[data-episode]").filter({ hasText: "Press line 3 × Seal leak" });
  await expect(episode).toHaveCount(1);
  await expect(episode.getByRole("link", { name: "Flagged-period record" })).toHaveAttribute("href", /^\/episodes\/\d+$/);
  // The episode sits where the story was planted (window starts within the story ± one window).
  const start = (await episode.getAttribute("data-episode"))!;
  const last = addDays(localToday(), -1);
  expect(start >= addDays(last, -DEMO_STORIES.mix.startDaysBack - 7)).toBe(true);
  expect(start <= addDays(last, -DEMO_STORIES.mix.startDaysBack + DEMO_STORIES.mix.lengthDays)).toBe(true);
  await expect(page.getByTestId("freshness")).toContainText(/^Results as of \d{2}:\d{2}:\d{2}/);
  await shot(page, "timeline");
  await episode.getByRole("link", { name: "Flagged-period record" }).click();
  await expect(page.getByRole("heading", { level: 1, name: /Flagged period #\d+: All lines compared/ })).toBeVisible();
  await page.goBack();

  await episode.locator("td").nth(2).getByRole("link").click();
  await expect(page).toHaveURL(/\/comparisons\/lines\/windows\/\d{4}-\d{2}-\d{2}$/);
  await expect(page.locator('.state[data-state="flagged"]').first()).toBeVisible();
  await expect(page.getByTestId("freshness")).toContainText(/^Results as of \d{2}:\d{2}:\d{2}/);
  const cell = page.locator('table.heat td[data-row="P3"][data-category="seal-leak"]');
  await expect(cell).toHaveAttribute("data-beyond", "true");
  await expect(cell).toContainText("▲");
  await expect(cell).toContainText("+");
  const reading = page.getByTestId("reading");
  await expect(reading).toContainText("Press line 3 recorded");
  await expect(reading).toContainText("“Seal leak” defects");
  await expect(reading).toContainText("not a cause");
  await expect(reading).toContainText("quality system, customer requirements and local regulations");
  await expect(page.getByTestId("method")).toContainText("Cochran");
  await expect(page.locator('[data-chart="contribution"] svg').first()).toBeVisible();
  await expect(page.locator('[data-chart="mix"] svg').first()).toBeVisible();
  await expect(page.locator('[data-chart="pareto"] svg[role="img"]')).toHaveCount(5);
  await expect(page.locator('[data-chart="pareto"] svg[role="img"]').nth(2)).toHaveAttribute("aria-label", /^Pareto chart of Press line 3: Seal leak/);
  await shot(page, "window");
});

test("a click on the timeline opens that window", async ({ page }) => {
  await page.goto("/comparisons/lines");
  const svg = page.locator('[data-chart="timeline"] svg.recharts-surface').first();
  await expect(svg).toBeVisible();
  const box = (await svg.boundingBox())!;
  await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.5);
  await page.mouse.click(box.x + box.width * 0.5, box.y + box.height * 0.5);
  await expect(page).toHaveURL(/\/comparisons\/lines\/windows\/\d{4}-\d{2}-\d{2}$/);
});

test("the weekly review of the week inside the planted change names P3 × Seal leak", async ({ page }) => {
  await page.goto("/week");
  await expect(page.getByRole("heading", { level: 1, name: /Weekly review \d{4}-W\d{2}/ })).toBeVisible();
  await expect(page.getByTestId("week-lines")).toContainText("Press line 1");

  const last = addDays(localToday(), -1);
  const week = weekOf(addDays(last, -(DEMO_STORIES.mix.startDaysBack - 5)));
  await page.getByLabel("ISO week").fill(week.label);
  await page.getByRole("button", { name: "Show" }).click();
  await expect(page).toHaveURL(new RegExp(`week=${week.label}`));
  await expect(page.getByRole("heading", { level: 1, name: new RegExp(week.label) })).toBeVisible();
  const drivers = page.getByTestId("week-drivers");
  await expect(drivers.locator("tbody tr").first()).toContainText("Press line 3 × Seal leak");
  await shot(page, "week");
  await page.emulateMedia({ media: "print" });
  await expect(page.locator(".site-header")).toBeHidden();
  await shot(page, "week-print");
  // Printable on both paper sizes: the PDFs are kept beside the screenshots to look at.
  for (const format of ["A4", "Letter"] as const) {
    const pdf = await page.pdf({ format, printBackground: true, path: path.join(SHOTS, `week-${format}.pdf`) });
    expect(pdf.subarray(0, 5).toString()).toBe("%PDF-");
  }
  await page.emulateMedia({ media: "screen" });

  await page.goto("/week?week=2026-W99");
  await expect(page.locator("p.form-message.error")).toContainText("“2026-W99” is not an ISO week");
});

test("settings are saved, validated and show their result", async ({ page }) => {
  await page.goto("/comparisons/shifts-P5/settings");
  await expect(page.getByRole("heading", { level: 1, name: /Settings/ })).toBeVisible();
  await page.getByLabel(/Step/).fill("30");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.locator("p.form-message.error")).toContainText("need another look");
  await expect(page.getByText("The step cannot be longer than the window.")).toBeVisible();
  await page.getByLabel(/Step/).fill("2");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.locator("p.form-message.ok")).toContainText("Saved");
  await shot(page, "settings");
  await page.goto("/comparisons/shifts-P5");
  await expect(page.locator(".settings-summary")).toContainText("stepping 2 days");
});
