import { expect, test } from "@playwright/test";
import { signIn } from "./helpers/auth";

test("the demo dashboard shows the invented plant's lines", async ({ page }) => {
  await signIn(page, "engineer");
  await page.goto("/");
  await expect(page.getByRole("heading", { level: 1, name: "Overview" })).toBeVisible();
  await expect(page.getByText("Press line 3").first()).toBeVisible();
});
