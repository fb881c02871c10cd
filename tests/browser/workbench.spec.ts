import fs from "node:fs";
import { expect, test, type Page } from "@playwright/test";

/**
 * The workbench in the browser, as a demo designer: open a network, edit it,
 * see a diagnostic appear and disappear, commit, run a sweep, watch the
 * progress bar finish, read the plot and the table, export CSV. Screenshots
 * go to test-results/browser/workbench-*.png.
 */

const ROW = `network browser_row
param vh = 0.72
rail vdd = 1.8
rail gnd = 0
rail gh = vh
rail gv = 0.65
for k in 0..14 {
  nfet lat{k} gate=gh source=x{k} drain=x{k+1}
}
for k in 0..15 {
  nfet out{k} gate=gv source=x{k} drain=vdd
}
inject light from=x0 to=gnd value=1n
probe far = current(out15) / current(out0)
sweep vh from 0.6 to 0.8 points 400
`;

const shot = (page: Page, name: string) =>
  page.screenshot({ path: `test-results/browser/workbench-${name}.png`, fullPage: true });

async function signIn(page: Page, email = "designer@larkspur.example") {
  await page.goto("/signin");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill("larkspur-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("button", { name: "Sign out" })).toBeVisible();
}

/** Replaces the editor's whole text (insertText bypasses completion and bracket closing). */
async function setText(page: Page, text: string) {
  await page.locator(".cm-content").click();
  await page.keyboard.press("ControlOrMeta+a");
  await page.keyboard.insertText(text);
}

test("edit, commit, run a sweep, read the plot and the table, export CSV", async ({ page }) => {
  test.setTimeout(120_000);
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  await signIn(page);

  // the demo workspace lists the seeded networks; the seeded runs are finished
  await page.goto("/w/lm64-edge-row");
  const list = page.getByRole("list", { name: "Networks" });
  await expect(list.getByRole("link", { name: "LM-64 edge row", exact: true })).toBeVisible();
  await expect(list.getByRole("link", { name: /Newest run of Smoothing grid .*: done/ })).toBeVisible();
  await shot(page, "workspace");

  // upload a .runnel file as a new network: its text becomes the first commit
  await page.getByLabel("Upload a .runnel file").setInputFiles("examples/divider.runnel");
  await expect(page).toHaveURL(/\/w\/lm64-edge-row\/n\/divider(-\d+)?$/);
  await expect(page.getByRole("list", { name: "Commits" })).toContainText("Upload divider.runnel");
  await expect(page.locator(".cm-content")).toContainText("network divider");
  await page.goto("/w/lm64-edge-row");

  // a new network
  await page.getByLabel("New network name").fill("Browser row");
  await page.getByRole("button", { name: "Create" }).click();
  await expect(page).toHaveURL(/\/w\/lm64-edge-row\/n\/browser-row(-\d+)?$/);
  await expect(page.locator(".cm-content")).toBeVisible();

  // a diagnostic appears, then disappears
  await setText(page, `${ROW}nfet stray gate=nowhere source=x3 drain=vdd\n`);
  await expect(page.locator('[data-slot="diagnostic-count"]')).toHaveText(/^[1-9]\d* errors?/);
  await expect(page.getByRole("list", { name: "Diagnostics" })).toContainText("line 16:17 error: node 'nowhere'");
  await expect(page.locator(".cm-lintRange-error").first()).toBeVisible();
  await shot(page, "diagnostic");
  await setText(page, ROW);
  await expect(page.locator('[data-slot="diagnostic-count"]')).toHaveText("no problems");
  await expect(page.locator('[data-slot="dirty"]')).toBeVisible();

  // leaving with uncommitted edits asks first; declining stays on the page
  let asked = "";
  page.once("dialog", (d) => {
    asked = d.message();
    void d.dismiss();
  });
  const here = page.url();
  await page.getByRole("navigation", { name: "Breadcrumb" }).getByRole("link", { name: "LM-64 edge row" }).click();
  await expect.poll(() => asked).toMatch(/uncommitted edits/);
  expect(page.url()).toBe(here);

  // commit with the keyboard: the message first, then Ctrl+S in the editor
  await page.getByLabel("Commit message").fill("Sixteen taps, lateral gate sweep");
  await page.locator(".cm-content").click();
  await page.keyboard.press("ControlOrMeta+s");
  await expect(page.getByRole("status")).toHaveText(/^Committed [0-9a-f]{8}\.$/);
  await expect(page.getByRole("list", { name: "Commits" })).toContainText("Sixteen taps, lateral gate sweep");
  await expect(page.locator('[data-slot="dirty"]')).toHaveCount(0);

  // run with the keyboard; the progress bar fills and the run finishes
  await page.locator(".cm-content").click();
  await page.keyboard.press("ControlOrMeta+Enter");
  const runs = page.getByRole("list", { name: "Runs" });
  // starting a run elaborates the commit on the server: on a loaded machine that takes more than the default 5 s
  await expect(page.getByRole("status")).toHaveText(/^Run of [0-9a-f]{8} queued\.$/, { timeout: 30_000 });
  await expect(runs.locator("[data-state]").first()).toBeVisible();
  await shot(page, "running");
  await expect(runs.locator('[data-state="done"]')).toBeVisible({ timeout: 60_000 });
  await expect(runs).toContainText("400 points");

  // the run page: progress complete, caution, plot, table
  await runs.getByRole("link").first().click();
  await expect(page).toHaveURL(/\/runs\/r_[a-z2-7]+$/);
  const bar = page.getByRole("progressbar", { name: "Run progress" });
  await expect(bar).toHaveAttribute("aria-valuenow", "400");
  await expect(bar).toHaveAttribute("aria-valuemax", "400");
  await expect(page.getByText("Results are model estimates.")).toBeVisible();
  await expect(page.locator('[data-slot="solver-method"]')).toContainText("one sparse symmetric solve");
  await expect(page.getByRole("img", { name: "far over vh" }).locator("canvas").first()).toBeVisible();
  const table = page.getByRole("table", { name: "Probes by point" });
  await expect(table.locator("tbody tr")).toHaveCount(25);
  await expect(page.getByText("400 rows")).toBeVisible();
  await shot(page, "run-probes");

  // sort by the probe, descending: the strongest coupling (largest vh) comes first
  const farHeader = table.locator("th", { has: page.getByRole("button", { name: "far" }) });
  while ((await farHeader.getAttribute("aria-sort")) !== "descending")
    await table.getByRole("button", { name: "far" }).click();
  await expect(table.locator("tbody tr").first().locator("td").nth(1)).toHaveText("800 mV");

  // the spatial profile of the output currents
  await page.getByRole("tab", { name: "Profile" }).click();
  await expect(
    page
      .getByRole("img", { name: /along the index/ })
      .locator("canvas")
      .first(),
  ).toBeVisible();
  await shot(page, "run-profile");

  // export CSV
  const download = page.waitForEvent("download");
  await page.getByRole("link", { name: "Probes CSV" }).click();
  const file = await (await download).path();
  const csv = fs.readFileSync(file, "utf8").trim().split("\r\n");
  expect(csv[0]).toBe("point,sample,vh,temp,far,method,iterations,residual_A,error");
  expect(csv).toHaveLength(401);
  expect(errors).toEqual([]);
});

test("a viewer sees the network read only: no commit box, no Run button, no key hints", async ({ page }) => {
  await signIn(page, "viewer@larkspur.example");
  await page.goto("/w/lm64-edge-row");
  await page.getByRole("list", { name: "Networks" }).getByRole("link", { name: "LM-64 edge row", exact: true }).click();
  await expect(page.locator(".cm-content")).toContainText("network");
  await expect(page.getByText("Read only: your role can read, download and compare.")).toBeVisible();
  await expect(page.getByRole("button", { name: "Run", exact: true })).toHaveCount(0);
  await expect(page.getByLabel("Commit message")).toHaveCount(0);
  await expect(page.getByText("Ctrl+Enter run")).toHaveCount(0);
  await expect(page.getByText("Ctrl+S commit")).toHaveCount(0);
});

test("the Sensitivity view of the demo's mismatch study: devices by threshold sensitivity, and the budget", async ({
  page,
}) => {
  await signIn(page, "viewer@larkspur.example");
  await page.goto("/w/lm64-edge-row");
  await page
    .getByRole("list", { name: "Networks" })
    .getByRole("link", { name: "Divider mismatch study", exact: true })
    .click();
  await expect(page).toHaveURL(/\/n\/divider-mismatch-study$/);
  await page.getByRole("list", { name: "Runs" }).getByRole("link").first().click();
  await expect(page).toHaveURL(/\/runs\/r_/);
  await page.getByRole("tab", { name: "Sensitivity" }).click();
  const table = page.getByRole("table", { name: "Devices by threshold sensitivity" });
  await expect(table.locator("tbody tr").first()).toBeVisible({ timeout: 30_000 });
  await expect(page.locator('[data-slot="budget"]')).toContainText("Monte Carlo σ");
  await shot(page, "sensitivity");
});

test("the Goal-seek view of the demo's spreading row: the file's seek found, and a designer's own seek", async ({
  page,
}) => {
  await signIn(page);
  await page.goto("/w/lm64-edge-row");
  await page
    .getByRole("list", { name: "Networks" })
    .getByRole("link", { name: "LM-64 spreading row", exact: true })
    .click();
  await expect(page).toHaveURL(/\/n\/lm-64-spreading-row$/);
  await page.getByRole("list", { name: "Runs" }).getByRole("link").first().click();
  await page.getByRole("tab", { name: "Goal-seek" }).click();
  const stated = page.getByRole("table", { name: "Goal-seek of vh" }).first();
  await expect(stated.locator("tbody tr").first()).toContainText(/the file's point\s*8\d\d(\.\d)? mV/, {
    timeout: 30_000,
  });
  await expect(page.getByTestId("goal-seek")).toContainText("vh giving lambda = 6: found");
  await page.getByLabel("Seek param").fill("vh");
  await page.getByLabel("Seek from").fill("0.65");
  await page.getByLabel("Seek to").fill("0.95");
  await page.getByLabel("Seek probe").fill("lambda");
  await page.getByLabel("Seek target").fill("5");
  await page.getByRole("button", { name: "Seek", exact: true }).click();
  await expect(page.getByTestId("goal-seek")).toContainText("vh giving lambda = 5: found", { timeout: 30_000 });
  await shot(page, "goal-seek");
  // kept with the run: after a reload it is still listed, with who asked
  await page.reload();
  await page.getByRole("tab", { name: "Goal-seek" }).click();
  const asked = page.getByRole("region", { name: "Seeks asked on this run" });
  await expect(asked).toContainText("vh giving lambda = 5: found", { timeout: 30_000 });
  await expect(asked).toContainText("by Teo Brandt");
});

test("an owner archives a network, finds it under Archived networks and restores it", async ({ page }) => {
  await signIn(page, "owner@larkspur.example");
  await page.goto("/w/lm64-edge-row");
  const name = `Archive me ${Date.now()}`;
  await page.getByLabel("New network name").fill(name);
  await page.getByRole("button", { name: "Create" }).click();
  await expect(page.locator(".cm-content")).toBeVisible();
  await page.goto("/w/lm64-edge-row");
  const list = page.getByRole("list", { name: "Networks" });
  await expect(list.getByRole("link", { name, exact: true })).toBeVisible();

  page.once("dialog", (d) => void d.accept());
  await page.getByRole("button", { name: `Archive ${name}` }).click();
  await expect(list.getByRole("link", { name, exact: true })).toHaveCount(0);
  await page.getByRole("button", { name: /Archived networks \(\d+\)/ }).click();
  const archived = page.getByRole("list", { name: "Archived networks" });
  await expect(archived.getByRole("link", { name, exact: true })).toBeVisible();

  await archived.getByRole("button", { name: `Restore ${name}` }).click();
  await expect(list.getByRole("link", { name, exact: true })).toBeVisible();
});

test("links are fetched ahead on hover, not on arrival: the workspace page asks the server for nothing more", async ({
  page,
}) => {
  await signIn(page);
  const ahead: string[] = [];
  page.on("request", (r) => {
    if (r.url().includes("_rsc=")) ahead.push(new URL(r.url()).pathname);
  });
  await page.goto("/w/lm64-edge-row");
  await expect(page.getByRole("heading", { level: 1 })).toBeVisible();
  // every network and run of the list, and the header's links, used to be fetched ahead (29 payloads on this page)
  await page.waitForTimeout(1000);
  expect(ahead).toEqual([]);
  await page.getByTestId("inbox-badge").hover();
  await expect.poll(() => ahead).toContain("/inbox");
  await page.getByTestId("inbox-badge").click();
  await expect(page).toHaveURL(/\/inbox$/);
});
