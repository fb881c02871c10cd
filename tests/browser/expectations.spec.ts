import { expect, test, type Page } from "@playwright/test";
import { signIn } from "./sign-in";

/**
 * Expectations in the browser, on the seeded demo (scripts/seed): the run page opens with its Expectations panel
 * first — each expectation's status, points passing, margin and where it fails, the margin along the sweep and,
 * for the Monte Carlo study, the yield with its interval; the workspace list and a network's history show each
 * commit's expectation status. Screenshots go to test-results/browser/expectations-*.png.
 */
const shot = (page: Page, name: string) =>
  page.screenshot({ path: `test-results/browser/expectations-${name}.png`, fullPage: true });

test("the run page shows the expectations first: status, margin, where it fails, margin and yield plots", async ({
  page,
}) => {
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  await signIn(page, "designer@larkspur.example");
  await page.goto("/w/lm64-edge-row");
  // The workspace list: each network's newest commit with its expectations' status from its newest run.
  const divider = page.locator("li", { has: page.getByRole("link", { name: "Bias divider", exact: true }) });
  await expect(divider.locator("[data-head-expectations]")).toHaveAttribute("data-head-expectations", "pass");
  await expect(divider.locator("[data-slot=expectation-status]")).toHaveText("all 3 pass");
  // Its history shows the same on the commit's row.
  await divider.getByRole("link", { name: "Bias divider", exact: true }).click();
  const history = page.getByRole("list", { name: "Commits" });
  await expect(history.locator("[data-slot=expectation-status]").first()).toHaveText("all 3 pass");
  await page.goto("/w/lm64-edge-row");
  await page.getByRole("link", { name: /^Newest run of Divider mismatch study/ }).click();
  const panel = page.getByRole("region", { name: "Expectations" });
  await expect(panel).toBeVisible();
  // First: before the model, the validity notes and the results.
  const sections = await page
    .locator("section[aria-label]")
    .evaluateAll((els) => els.map((e) => e.getAttribute("aria-label")));
  expect(sections.indexOf("Expectations")).toBeLessThan(sections.indexOf("Model and solver"));
  expect(sections.indexOf("Expectations")).toBeLessThan(sections.indexOf("Results"));
  await expect(panel.locator('tr[data-expectation="matched"]')).toHaveAttribute("data-passed", "false");
  await expect(panel.locator('tr[data-expectation="pair_saturated"]')).toHaveAttribute("data-passed", "true");
  await expect(panel.locator("[data-slot=expectation-status]")).toHaveText("1 failing");
  const matched = panel.locator('tr[data-expectation="matched"]');
  await expect(matched).toContainText("/ 600");
  await expect(matched).toContainText(/point \d+, dv = /);
  await expect(matched).toContainText(/\d+\.\d % \(\d+\.\d %–\d+\.\d %\)/);
  await expect(panel.locator("[data-slot=margin-plot] [data-slot=plot]")).toBeVisible();
  await expect(panel.locator("[data-slot=yield-plot] [data-slot=plot]")).toBeVisible();
  await shot(page, "mismatch-run");
  // Choosing the other expectation shows its margin, in volts.
  await panel.getByRole("button", { name: "pair_saturated" }).click();
  await expect(panel.locator("[data-slot=expectation-detail]")).toContainText("every device saturated: devices=m*");
  expect(errors).toEqual([]);
});
