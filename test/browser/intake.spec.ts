import { expect, test, type Page } from "@playwright/test";
import { signIn } from "./helpers/auth";

/** Today's date on this machine (the server's plant clock runs on the same machine). */
function today(): string {
  const d = new Date();
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, "0")}-${String(d.getDate()).padStart(2, "0")}`;
}

/** A category's count field (the steppers beside it are buttons named after it too). */
const countField = (page: Page, name: string) => page.getByRole("textbox", { name: new RegExp(`^${name}`) });

function watchErrors(page: Page): string[] {
  const problems: string[] = [];
  page.on("pageerror", (error) => problems.push(String(error)));
  page.on("console", (msg) => {
    if (/Content Security Policy|hydrat/i.test(msg.text())) problems.push(msg.text());
  });
  return problems;
}

test("an operator fills and submits a floor sheet with the keyboard alone", async ({ page }) => {
  const problems = watchErrors(page);
  await signIn(page, "operator");
  await page.setViewportSize({ width: 768, height: 1024 });
  await page.goto(`/entry?line=P4&shift=EARLY&date=${today()}`);
  await expect(page.getByRole("heading", { level: 2, name: /Press line 4 · Early/ })).toBeVisible();
  const first = countField(page, "Short shot");
  await expect(first).toBeFocused();

  // Short shot 3, Flash +2 with the plus key, Sink mark 1, then jump to units and press Enter.
  await page.keyboard.type("3");
  await page.keyboard.press("Tab");
  await expect(countField(page, "Flash")).toBeFocused();
  await page.keyboard.press("+");
  await page.keyboard.press("+");
  await page.keyboard.press("Tab");
  await expect(countField(page, "Sink mark")).toBeFocused();
  await page.keyboard.type("1");
  for (let i = 0; i < 10; i += 1) await page.keyboard.press("Tab");
  await expect(page.getByLabel(/^Units inspected/)).toBeFocused();
  await page.keyboard.type("9000");
  await page.keyboard.press("Enter");

  const saved = page.getByRole("status").filter({ hasText: "Saved:" });
  await expect(saved).toContainText("Recorded 6 defects in 3 categories and 9,000 units inspected.");
  await expect(saved).toContainText("Sheet total now: 6 defects, 9,000 units inspected.");
  await expect(page.getByText(/Already recorded:.*6 defects, 9,000 units inspected/)).toBeVisible();

  // Touch targets of the steppers and the count fields are at least 44 px.
  const box = await page.getByRole("button", { name: "One more Flash" }).boundingBox();
  expect(box!.height).toBeGreaterThanOrEqual(44);
  expect(box!.width).toBeGreaterThanOrEqual(44);
  // The sheet fits a 768 px tablet without sideways scrolling.
  expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(768);

  // The sheet now says what is recorded and asks before anything more is entered.
  await page.reload();
  await expect(page.getByText(/Already recorded:.*6 defects/)).toBeVisible();
  await expect(countField(page, "Short shot")).toBeDisabled();
  await page.getByLabel(/Record additional defects/).check();
  await countField(page, "Warp").fill("2");
  await countField(page, "Warp").press("Enter");
  await expect(page.getByRole("status").filter({ hasText: "Saved:" })).toContainText("Sheet total now: 8 defects");
  expect(problems).toEqual([]);
});

test("a sheet whose first answer is lost is kept, retried and counted once", async ({ page }) => {
  await signIn(page, "operator");
  await page.goto(`/entry?line=P5&shift=LATE&date=${today()}`);
  await expect(countField(page, "Short shot")).toBeFocused();

  // The first POST reaches the server and is stored, but its answer never arrives.
  let posts = 0;
  const keys: string[] = [];
  await page.route("**/api/v1/floor-sheets", async (route) => {
    posts += 1;
    keys.push(route.request().headers()["idempotency-key"]);
    if (posts === 1) {
      await route.fetch();
      await route.abort("connectionreset");
    } else {
      await route.continue();
    }
  });
  await countField(page, "Short shot").fill("4");
  await countField(page, "Flash").fill("5");
  await countField(page, "Flash").press("Enter");
  await expect(page.getByText(/Not sent yet — kept on this device/)).toBeVisible();
  const stored = await page.evaluate(() => localStorage.getItem("linemix.pending-sheets.v1"));
  expect(stored).toContain('"mode":"new"');

  // The retry (same idempotency key) is answered as a replay: saved, counted once.
  const saved = page.getByRole("status").filter({ hasText: "Saved:" });
  await expect(saved).toContainText("Sheet total now: 9 defects", { timeout: 20_000 });
  await expect(saved).toContainText("counted once");
  expect(posts).toBe(2);
  expect(keys[0]).toBe(keys[1]);
  expect(await page.evaluate(() => localStorage.getItem("linemix.pending-sheets.v1"))).toBe("[]");
  await page.unroute("**/api/v1/floor-sheets");
  await page.reload();
  await expect(page.getByText(/Already recorded:.*9 defects/)).toBeVisible();
});

test("offline: the sheet survives a reload and is sent when the network is back", async ({ page, context }) => {
  await signIn(page, "operator");
  await page.goto(`/entry?line=P3&shift=NIGHT&date=${today()}`);
  await expect(countField(page, "Short shot")).toBeFocused();
  await page.route("**/api/v1/floor-sheets", (route) => route.abort("internetdisconnected"));
  await countField(page, "Seal leak").fill("7");
  await countField(page, "Seal leak").press("Enter");
  await expect(page.getByText(/Not sent yet — kept on this device/)).toBeVisible();

  // Reload while the network still refuses: the pending sheet is still there.
  await page.reload();
  await expect(page.getByText(/Not sent yet — kept on this device/)).toBeVisible();

  // Going offline and back online sends it at once.
  await page.unroute("**/api/v1/floor-sheets");
  await context.setOffline(true);
  await context.setOffline(false);
  await expect(page.getByRole("status").filter({ hasText: "Saved:" })).toContainText("Sheet total now: 7 defects", { timeout: 20_000 });
  await page.reload();
  await expect(page.getByText(/Already recorded:.*7 defects/)).toBeVisible();
});

test("an engineer imports a file with one bad row and reads the line-numbered message, then a clean file", async ({ page }) => {
  const problems = watchErrors(page);
  await signIn(page, "engineer", "/import");
  await expect(page.getByRole("heading", { level: 1, name: /Import counts/ })).toBeVisible();
  const bad = "date,shift,line,category,count\n2020-01-06,EARLY,P1,flash,2\n2020-01-06,EARLY,P1,warp,-2\n2020-01-06,LATE,P1,warp,1\n";
  await page.getByLabel("CSV file").setInputFiles({ name: "bad.csv", mimeType: "text/csv", buffer: Buffer.from(bad) });
  await page.getByRole("button", { name: "Check file" }).click();
  await expect(page.getByRole("heading", { name: /Refused: 1 problem — nothing was imported/ })).toBeVisible();
  await expect(page.locator(".import-problems li")).toHaveText(['line 3: count "-2" is negative']);

  const good = "Count,Category,Line,Shift,Date\r\n2,flash,P1,EARLY,2020-01-06\r\n1,warp,P1,LATE,2020-01-06\r\n";
  await page.getByLabel("CSV file").setInputFiles({ name: "good.csv", mimeType: "text/csv", buffer: Buffer.from(`\uFEFF${good}`) });
  await page.getByRole("button", { name: "Check file" }).click();
  await expect(page.getByRole("heading", { name: /Ready to import: 2 tally rows/ })).toBeVisible();
  await page.getByRole("button", { name: "Import 2 rows" }).click();
  await expect(page.getByRole("heading", { name: /Imported as batch #\d+: 2 tally rows/ })).toBeVisible();

  // The same file again is refused.
  await page.getByRole("button", { name: "Check file" }).click();
  await expect(page.locator(".import-problems li").first()).toContainText("already imported");
  expect(problems).toEqual([]);
});

test("an engineer corrects an entry and sees who changed what, when and why in the cell history", async ({ page }) => {
  await signIn(page, "engineer", "/entry/corrections?date=2020-01-06&shift=EARLY&line=P1");
  await expect(page.getByRole("heading", { level: 1, name: "Corrections" })).toBeVisible();
  // The shared sheet picker keeps the chosen sheet.
  const picker = page.getByRole("form", { name: "Choose the sheet" });
  await expect(picker.getByLabel("Line")).toHaveValue("P1");
  await expect(picker.getByLabel("Shift")).toHaveValue("EARLY");
  await expect(picker.getByLabel("Production date")).toHaveValue("2020-01-06");
  const row = page.getByRole("row").filter({ hasText: "Flash" }).first();
  await row.getByLabel("New value").fill("5");
  await row.getByLabel("Reason").fill("recounted the reject bin");
  await row.getByRole("button", { name: "Correct" }).click();
  await expect(page.getByRole("status")).toContainText(/Corrected: Flash 2 → 5 \(entry #\d+ replaces #\d+; reason: recounted the reject bin\)/);

  await page.goto("/history?date=2020-01-06&shift=EARLY&line=P1&category=flash");
  await expect(page.getByText(/Current total: 5/)).toBeVisible();
  const history = page.locator("table.data tbody tr");
  await expect(history).toHaveCount(2);
  await expect(history.nth(0)).toContainText("superseded");
  await expect(history.nth(1)).toContainText("Demo Engineer");
  await expect(history.nth(1)).toContainText("recounted the reject bin");
  await expect(history.nth(1)).toContainText("current");
  const cell = page.getByRole("form", { name: "Choose the cell" });
  await expect(cell.getByLabel("Category")).toHaveValue("flash");
  await expect(cell.getByLabel("Shift")).toHaveValue("EARLY");
  await page.screenshot({ path: test.info().outputPath("cell-history.png"), fullPage: true });
});

test("an admin adds a defect category and retires it; the floor sheet follows", async ({ page }) => {
  await signIn(page, "admin", "/setup/category");
  await page.getByLabel("Code").fill("gate-vestige");
  await page.locator("form").filter({ has: page.getByLabel("Code") }).getByLabel("Name").fill("Gate vestige");
  await page.getByRole("button", { name: "Add defect category" }).click();
  await expect(page.getByText("Added gate-vestige.")).toBeVisible();
  await page.goto(`/entry?line=P2&shift=EARLY&date=${today()}`);
  await expect(countField(page, "Gate vestige")).toBeVisible();

  await page.goto("/setup/category");
  page.once("dialog", (d) => void d.accept());
  await page.getByRole("form", { name: "Retire gate-vestige" }).getByRole("button", { name: "Retire" }).click();
  await expect(page.getByText("Retired; its history is kept.")).toBeVisible();
  await page.goto(`/entry?line=P2&shift=EARLY&date=${today()}`);
  await expect(countField(page, "Short shot")).toBeVisible();
  await expect(countField(page, "Gate vestige")).toHaveCount(0);
  await page.goto("/setup");
  await expect(page.getByRole("table")).toContainText("category.retire");
});

test("an admin cannot add a shift that overlaps another; the form says which and where", async ({ page }) => {
  await signIn(page, "admin", "/setup/shift");
  const add = page.getByRole("form", { name: "Add a shift" });
  await add.getByLabel("Code").fill("SWING");
  await add.getByLabel("Name").fill("Swing");
  await add.getByLabel("Starts").fill("18:00");
  await add.getByLabel("Ends").fill("02:00");
  await add.getByRole("button", { name: "Add shift" }).click();
  await expect(add.getByRole("alert")).toHaveText(
    "Shift SWING (18:00–02:00) would overlap shift LATE (14:00–22:00) from 18:00 to 22:00. Shifts must not overlap: each minute of the day belongs to one shift. Change the clock times, or retire LATE first.",
  );
  await page.screenshot({ path: test.info().outputPath("setup-shift-overlap.png"), fullPage: true });
  await page.reload();
  await expect(page.getByText("SWING")).toHaveCount(0);
});
