import { expect, test, type Page } from "@playwright/test";
import { signIn as signInTo } from "./sign-in";

/**
 * Review in the browser, on the seeded demo thread (scripts/seed/review.ts): the
 * reviewer opens the thread from its link, follows the run card to the run,
 * compares the fix with its parent, and signs off; a viewer sees the thread
 * without the sign-off buttons. Screenshots go to test-results/browser/review-*.png.
 */
const THREAD = "/threads/t_demo_divider_ratio";

/** Signs in, then on to the thread. */
const signIn = (page: Page, email: string) => signInTo(page, email, THREAD);
const shot = (page: Page, name: string) =>
  page.screenshot({ path: `test-results/browser/review-${name}.png`, fullPage: true });

test("a reviewer opens a thread from its link, follows the run card, compares two commits, signs off", async ({
  page,
}) => {
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  await signIn(page, "reviewer@larkspur.example");

  await page.goto(THREAD);
  await expect(page.getByRole("heading", { name: "Split ratio at dv = 20 mV is short of 2:1" })).toBeVisible();
  const comments = page.getByRole("list", { name: "Comments" }).getByRole("listitem");
  await expect(comments).toHaveCount(3);
  await expect(comments.nth(0).locator("[data-review=rework]")).toBeVisible();
  await expect(comments.nth(2).locator("[data-review=signed_off]")).toBeVisible();
  // the run reference in the designer's reply became a card with the run's state and probes
  const card = comments.nth(1).locator("[data-run-card]");
  await expect(card).toBeVisible();
  await expect(card).toContainText("done");
  await expect(card).toContainText("ratio =");
  await shot(page, "thread");

  // follow the run card to the run's permalink
  const runId = await card.getAttribute("data-run-card");
  await card.click();
  await expect(page).toHaveURL(new RegExp(`/runs/${runId}$`));
  await page.goBack();

  // compare the questioned commit with the fix: the changed line and the values that moved
  // the thread is on the commit the reviewer questioned; the header links the comparison with the fix
  await page.getByRole("link", { name: /^Compare \w+ → \w+$/ }).click();
  await expect(page).toHaveURL(/\/compare\?from=.*&to=/);
  const facing = page.getByRole("table", { name: "Facing-columns diff" });
  // the changed token is marked within the line, on both sides
  await expect(facing.locator('[data-line="changed"] mark[data-mark="now"]')).toHaveText("26mV");
  await expect(facing.locator('[data-line="changed"] mark[data-mark="was"]')).toContainText("20mV");
  await expect(page.getByTestId("moved-summary")).toContainText("values moved beyond tolerance");
  // the per-probe summary lists the ratio as moved, with where it moved most
  const ratioRow = page.getByTestId("probe-summary").locator('tr[data-probe="ratio"]');
  await expect(ratioRow).toHaveAttribute("data-moved", "1");
  await page.getByRole("link", { name: "show in one column" }).click();
  await expect(page.getByRole("table", { name: "One-column diff" }).locator('[data-line="added"]')).toContainText(
    "26mV",
  );
  await shot(page, "compare");

  // back to the thread: the reviewer was mentioned in the seeded comparison threads, so the header's inbox shows it
  await page.goto(THREAD);
  await expect(page.getByTestId("inbox-badge")).toHaveAttribute("aria-label", /Inbox, \d+ unread/);
  // the reviewer signed the fix off in the seed: the buttons show it, and the verdict can be withdrawn
  await expect(page.getByTestId("my-verdict")).toHaveAttribute("data-state", "signed_off");
  await expect(page.getByRole("button", { name: "✓ Signed off" })).toBeDisabled();
  await page.getByRole("button", { name: "Withdraw my verdict" }).click();
  await expect(comments).toHaveCount(4);
  await expect(comments.nth(3).locator("[data-review=withdrawn]")).toBeVisible();
  await expect(page.getByTestId("my-verdict")).toHaveAttribute("data-state", "none");
  // sign off again: the confirmation lists the commit and its newest runs before anything is recorded
  await page.getByRole("button", { name: "Sign off…" }).click();
  const confirm = page.getByRole("dialog", { name: "Sign off this commit?" });
  await expect(
    confirm.getByRole("list", { name: "Runs being signed off" }).getByRole("listitem").first(),
  ).toContainText("done");
  await confirm
    .getByLabel(/Note with the sign-off/)
    .fill("Checked the compare page once more: only the divider moved.");
  await confirm.getByRole("button", { name: /^Sign off \w+/ }).click();
  await expect(comments).toHaveCount(5);
  await expect(comments.nth(4)).toContainText("Checked the compare page once more");
  await expect(comments.nth(4).locator("[data-review=signed_off]")).toBeVisible();
  await expect(page.getByTestId("my-verdict")).toHaveAttribute("data-state", "signed_off");
  await shot(page, "signed-off");
  expect(errors).toEqual([]);
});

test("a viewer reads the thread without sign-off buttons; an unknown thread is a 404", async ({ page }) => {
  await signIn(page, "viewer@larkspur.example");
  await page.goto(THREAD);
  await expect(page.getByRole("heading", { name: "Split ratio at dv = 20 mV is short of 2:1" })).toBeVisible();
  await expect(page.getByRole("button", { name: /Sign off/ })).toHaveCount(0);
  await expect(page.getByText("you can read this thread but not reply")).toBeVisible();
  const res = await page.goto("/threads/t_no_such_thread");
  expect(res?.status()).toBe(404);
});

test("a designer sees the bench data against the run, and a bad CSV is refused with its row and column", async ({
  page,
}) => {
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  await signIn(page, "designer@larkspur.example");
  await page.goto("/w/lm64-edge-row/n/lm-64-edge-row");
  const panel = page.getByRole("region", { name: "Measurements" });
  await expect(panel.getByTestId("agreement-i")).toContainText("RMS of the log ratio");
  await panel.getByLabel("Measurement CSV").setInputFiles({
    name: "bad.csv",
    mimeType: "text/csv",
    buffer: Buffer.from("tap [1], i [nA]\n0, 0.5\n1, half\n"),
  });
  await panel.getByRole("button", { name: "Upload" }).click();
  await expect(panel.getByRole("alert")).toContainText('row 3, column 2 (i): "half" is not a number');
  await shot(page, "measurements");
  // a good file over a gate voltage: the row's operating-point run cannot be compared with it (used on the run page below)
  await panel.getByLabel("Measurement CSV").setInputFiles({
    name: "vh-sweep.csv",
    mimeType: "text/csv",
    buffer: Buffer.from("vh [mV], i [nA]\n700, 0.5\n750, 0.6\n"),
  });
  await panel.getByRole("button", { name: "Upload" }).click();
  await expect(panel.getByLabel("Measurement", { exact: true }).locator("option:checked")).toContainText(
    "vh-sweep.csv",
  );
  await expect(panel.getByRole("alert")).toHaveCount(0);

  // the same bench data on the run page's own profile plot: the row's newest run is an operating point with probes i0…i63
  await page.goto("/w/lm64-edge-row");
  await page.getByRole("link", { name: "Newest run of LM-64 edge row: done" }).click();
  await expect(page).toHaveURL(/\/runs\/r_/);
  await page.getByRole("tab", { name: "Profile" }).click();
  const profile = page.getByRole("tabpanel", { name: "Profile" });
  const benchData = profile.getByLabel("Bench data", { exact: true });
  const choose = async (file: string) =>
    benchData.selectOption((await benchData.locator("option", { hasText: file }).getAttribute("value"))!);
  await choose("lm64-row-bench.csv");
  await expect(profile.getByLabel("Profile of")).toHaveValue("probe:i");
  const plot = profile.locator("[data-slot=plot]");
  await expect(plot.locator(".u-legend")).toContainText("measured: lm64-row-bench.csv");
  await expect(plot.locator(".u-legend")).toContainText("probe i·");
  const figures = profile.getByTestId("bench-agreement-i");
  await expect(figures).toContainText("RMS of the log ratio");
  await expect(figures).toContainText(/largest absolute error \d[\d.]* [pnµ]A at tap = \d+/);
  await expect(figures).toContainText(/\d+ points compared\./);
  await expect(profile.getByRole("note")).toContainText("the measurement takes precedence");
  await page.screenshot({ path: "test-results/browser/run-overlay.png", fullPage: true });

  // a measurement the run cannot cover: the route's one-line reason in place of the figures, and no measured points
  await choose("vh-sweep.csv");
  await expect(profile.getByTestId("bench-refusal")).toContainText(
    "the run is an operating point; its x would be a tap index",
  );
  await expect(profile.getByTestId("bench-agreement-i")).toHaveCount(0);
  await expect(plot.locator(".u-legend")).not.toContainText("measured:");

  // the probes view has no sweep to draw on for this run: no bench control there, nothing breaks
  await page.getByRole("tab", { name: "Probes" }).click();
  await expect(page.getByRole("tabpanel", { name: "Probes" }).getByLabel("Bench data", { exact: true })).toHaveCount(0);
  expect(errors).toEqual([]);
});

test("the demo's seeded sweep review: its compare page overlays both runs along the sweep", async ({ page }) => {
  await signIn(page, "reviewer@larkspur.example");
  await page.goto("/w/lm64-edge-row/n/bias-sweep/compare");
  const sweep = page.locator("article[data-analysis]").first();
  await expect(sweep).toContainText("values");
  const overlay = sweep.locator("figure[data-overlay]").first();
  await expect(overlay.locator("[data-slot=plot] canvas").first()).toBeVisible({ timeout: 30_000 });
  // the overlay draws both runs: before and after in its legend
  await expect(overlay.locator(".u-legend").first()).toContainText("before");
  await expect(overlay.locator(".u-legend").first()).toContainText("after");
  await shot(page, "seeded-sweep-overlay");
});
