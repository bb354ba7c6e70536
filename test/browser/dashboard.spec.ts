import { expect, test } from "@playwright/test";

test("the demo dashboard shows the invented plant's lines", async ({ page }) => {
  await page.goto("/");
  await expect(page.getByRole("heading", { level: 1, name: "Overview" })).toBeVisible();
  await expect(page.getByText("Press line 3").first()).toBeVisible();
});
