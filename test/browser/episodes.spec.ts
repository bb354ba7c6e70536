import { expect, test, type Download, type Page } from "@playwright/test";
import { readFile } from "node:fs/promises";
import { pdfPageCount, pdfText } from "../episodes/pdf-reader";
import { DEMO_USERS, signIn } from "./helpers/auth";

/**
 * The flagged-period workflow in the browser on the demo plant, whose planted mix change
 * (press line 3 making far more seal leaks) the scan finds across lines.
 */

async function fileOf(download: Download): Promise<Buffer> {
  const path = await download.path();
  return readFile(path);
}

async function download(page: Page, name: string): Promise<{ download: Download; body: Buffer }> {
  const [d] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name, exact: true }).click()]);
  return { download: d, body: await fileOf(d) };
}

async function openCount(page: Page): Promise<number> {
  const text = (await page.getByTestId("open-episodes").textContent()) ?? "";
  return Number(/(\d+) open/.exec(text)?.[1] ?? Number.NaN);
}

test("an engineer reviews the planted episode, notes it and exports it for the meeting", async ({ page }) => {
  test.setTimeout(120_000);
  await signIn(page, "engineer");
  await page.goto("/episodes?comparison=lines");
  await expect(page.getByRole("heading", { level: 1, name: "Flagged periods" })).toBeVisible();
  const row = page.locator("tr[data-episode]").filter({ hasText: "Press line 3 · Seal leak" }).first();
  await expect(row).toBeVisible();
  await expect(row).toContainText("New");
  const before = await openCount(page);
  expect(before).toBeGreaterThan(0);

  await row.getByRole("link", { name: /^Flagged period \d+$/ }).click();
  await expect(page.getByRole("heading", { level: 1, name: /Flagged period #\d+: All lines compared/ })).toBeVisible();
  const id = Number(/\/episodes\/(\d+)/.exec(page.url())?.[1]);
  expect(id).toBeGreaterThan(0);
  await expect(page.getByTestId("reading")).toContainText("Seal leak");
  await expect(page.getByRole("link", { name: "Timeline of this comparison" })).toHaveAttribute("href", "/comparisons/lines");
  await expect(page.getByRole("link", { name: "The peak window in full" })).toHaveAttribute("href", /^\/comparisons\/lines\/windows\/\d{4}-\d{2}-\d{2}$/);

  // Take it into investigation (no reason needed): the engineer becomes its owner.
  await page.getByLabel("New status").selectOption("investigating");
  await page.getByRole("button", { name: "Change status" }).click();
  await expect(page.getByText(/Status changed to “Under investigation”/)).toBeVisible();
  await expect(page.getByTestId("episode-owner")).toHaveText(DEMO_USERS.engineer.displayName);
  await expect(page.locator("#episode-owner option:checked")).toHaveText(DEMO_USERS.engineer.displayName);

  // The plant's own containment / corrective-action numbers.
  await page.getByLabel("Containment / corrective-action references").fill("CA-2026-041, QN-5521");
  await page.getByRole("button", { name: "Save references" }).click();
  await expect(page.getByText("Action references saved.")).toBeVisible();
  await expect(page.getByTestId("episode-refs")).toHaveText("CA-2026-041, QN-5521");
  await expect(page.getByLabel("Containment / corrective-action references")).toHaveValue("CA-2026-041, QN-5521");

  // Closing needs a reason.
  await page.getByLabel("New status").selectOption("explained");
  await page.getByLabel("Reason").fill("Worn sealing die on press line 3, replaced on the night shift");
  await page.getByRole("button", { name: "Change status" }).click();
  await expect(page.getByText(/Status changed to “Explained”/)).toBeVisible();
  await expect(page.locator(".page-head [data-status]")).toHaveText(/Explained/);
  await expect.poll(() => openCount(page)).toBe(before - 1);

  // A note, with author and time.
  const note = `Die cavity 4 shows wear marks (${Date.now()})`;
  await page.getByLabel("Add a note").fill(note);
  await page.getByRole("button", { name: "Add note" }).click();
  const listed = page.locator(".episode-notes li").filter({ hasText: note });
  await expect(listed).toBeVisible();
  await expect(listed).toContainText(DEMO_USERS.engineer.displayName);
  await expect(listed.locator("time")).toHaveText(/\d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC/);

  // CSV: long form, one row per window × group × category, the planted cell among the drivers.
  const csv = await download(page, "CSV (long form)");
  expect(csv.download.suggestedFilename()).toBe(`linemix-episode-${id}.csv`);
  const lines = csv.body.toString("utf8").trim().split("\r\n");
  expect(lines[0]).toBe(
    "episode_id,comparison,status,episode_start,episode_end,window_start,window_end,window_flagged,group,category,observed,expected,adjusted_residual,contribution,driver,n,chi_square,df,p_value,adjusted_p_value,method,cramers_v_corrected",
  );
  expect(lines.length).toBeGreaterThan(5 * 12);
  const cells = lines.slice(1).map((l) => l.split(","));
  expect(cells.every((c) => c[0] === String(id) && c[1] === "lines" && c[2] === "explained")).toBe(true);
  expect(cells.some((c) => c[8] === "P3" && c[9] === "seal-leak" && c[14] === "true" && Number(c[12]) > 3)).toBe(true);

  // JSON: the same, with the configuration, the note and the snapshots.
  const json = await download(page, "JSON");
  const doc = JSON.parse(json.body.toString("utf8")) as {
    exportedBy: string;
    episodes: { id: number; status: string; configuration: { windowDays: number; alpha: number }; notes: { author: string; body: string }[]; snapshots: { reason: string }[]; windows: { cells: unknown[] }[] }[];
  };
  expect(doc.exportedBy).toBe(DEMO_USERS.engineer.displayName);
  const e = doc.episodes[0];
  expect(e).toMatchObject({ id, status: "explained", configuration: { windowDays: 7, alpha: 0.05 } });
  expect(e.notes).toContainEqual(expect.objectContaining({ author: DEMO_USERS.engineer.displayName, body: note }));
  expect(e.snapshots.map((s) => s.reason)).toEqual(["raised", "status:investigating", "status:explained"]);
  expect(e.windows.reduce((s, w) => s + w.cells.length, 0)).toBe(lines.length - 1);

  // PDF brief: a few pages with the reading, the status, the note and the cautions.
  const pdf = await download(page, "PDF brief");
  expect(pdf.download.suggestedFilename()).toBe(`linemix-episode-${id}.pdf`);
  expect(pdf.body.subarray(0, 5).toString("latin1")).toBe("%PDF-");
  expect(pdfPageCount(pdf.body)).toBeGreaterThanOrEqual(2);
  const text = pdfText(pdf.body);
  expect(text).toContain(`Flagged period #${id}: All lines compared`);
  expect(text).toContain("Status: Explained");
  expect(text).toContain("Press line 3");
  expect(text).toContain(note);
  expect(text).toContain("CA-2026-041, QN-5521");
  expect(text).toContain("not proof of a cause");

  // Then and now: the period's measures and its driver cells, each with both values.
  await page.reload();
  const thenNow = page.getByTestId("then-now");
  await expect(thenNow.getByRole("rowheader", { name: "Flagged period" })).toBeVisible();
  await expect(thenNow.locator("tr[data-measure]").first()).toBeVisible();
  await expect(thenNow.getByRole("table", { name: "Driver cells, and any cell whose count changed" }).locator("tr[data-cell]").first()).toContainText("obs.");
  await page.screenshot({ path: test.info().outputPath("episode-detail.png"), fullPage: true });

  // Every export is in the history.
  const history = page.locator("section[aria-labelledby='history-heading']");
  await expect(history.getByText("exported as CSV")).toBeVisible();
  await expect(history.getByText("exported as JSON")).toBeVisible();
  await expect(history.getByText("exported as PDF")).toBeVisible();
});

test("the list filters and exports what it shows", async ({ page }) => {
  await signIn(page, "engineer");
  await page.goto("/episodes");
  await page.getByLabel("Line", { exact: true }).selectOption("P3");
  await page.getByLabel("Category", { exact: true }).selectOption("seal-leak");
  await page.getByRole("button", { name: "Show" }).click();
  await expect(page).toHaveURL(/line=P3/);
  await expect(page.locator("tr[data-episode]").first()).toBeVisible();
  await expect(page.getByLabel("Line", { exact: true })).toHaveValue("P3");
  await expect(page.getByLabel("Status", { exact: true })).toHaveValue("");
  await page.screenshot({ path: test.info().outputPath("episode-list-filtered.png"), fullPage: true });
  const [d] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download CSV" }).click()]);
  const rows = (await fileOf(d)).toString("utf8").trim().split("\r\n").slice(1);
  expect(rows.length).toBeGreaterThan(0);
  const shown = await page.locator("tr[data-episode]").evaluateAll((trs) => trs.map((tr) => tr.getAttribute("data-episode")));
  expect(new Set(rows.map((r) => r.split(",")[0]))).toEqual(new Set(shown));
});
