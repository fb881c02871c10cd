import { expect, test, type Page } from "@playwright/test";
import { signIn } from "./sign-in";

/**
 * Results a designer reads at a glance: a 14-decade current on a log axis
 * that answers and draws its decades, axis titles with quantity and unit, the
 * legend at the last point, the Map's labelled axes and legend, the notation
 * toggle, and no page wider than a phone. Screenshots go to
 * test-results/browser/notebook-*.png.
 */

const DECADES = `network decades
param iin = 1n
rail vdd = 1.8
rail gnd = 0
rail gv = 0.5
inject src from=x0 to=gnd value=iin
nfet m gate=gv source=x0 drain=vdd
probe vx = voltage(x0)
probe iout = current(m)
sweep iin from 8.7e-25 to 4.9e-11 points 300 log
`;

const shot = (page: Page, name: string) =>
  page.screenshot({ path: `test-results/browser/notebook-${name}.png`, fullPage: true });

/**
 * The page `page` shows, opened signed in the same but with scripts off (what the server alone sends): its first
 * look's drawing, checked visible, with a screenshot. The caller closes its context when done with it.
 */
async function withoutScripts(page: Page, name: string) {
  const still = await page
    .context()
    .browser()!
    .newContext({
      javaScriptEnabled: false,
      storageState: await page.context().storageState(),
    });
  const bare = await still.newPage();
  await bare.goto(page.url());
  const look = bare.locator("[data-slot=first-look] svg");
  await expect(look).toBeVisible();
  await bare.screenshot({ path: `test-results/browser/notebook-${name}.png`, fullPage: true });
  return look;
}

test("a current over 14 decades opens on a log axis that answers, with decades and units on its axes", async ({
  page,
}) => {
  test.setTimeout(120_000);
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  // what the server drew must be what the browser draws first: no hydration mismatch
  page.on("console", (m) => {
    if (m.type() === "error" && /hydrat/i.test(m.text())) errors.push(m.text());
  });
  await signIn(page);
  await page.goto("/w/lm64-edge-row");
  await page.getByLabel("Upload a .runnel file").setInputFiles({
    name: "decades.runnel",
    mimeType: "text/plain",
    buffer: Buffer.from(DECADES),
  });
  await expect(page).toHaveURL(/\/w\/lm64-edge-row\/n\/decades(-\d+)?$/);
  await page.getByRole("button", { name: "Run", exact: true }).click();
  const runs = page.getByRole("list", { name: "Runs" });
  await expect(runs.locator('[data-state="done"]')).toBeVisible({ timeout: 60_000 });
  await runs.getByRole("link").first().click();
  await expect(page).toHaveURL(/\/runs\/r_[a-z2-7]+$/);

  // the probe that varies most (iout, 14 decades) opens first, on a log axis, because it is a current
  const panel = page.getByRole("tabpanel", { name: "Probes" });
  await expect(panel.getByLabel("Probe to plot")).toHaveValue("1");
  await expect(panel.getByLabel("log iout")).toBeChecked();
  const plot = panel.locator("[data-slot=plot]").first();
  await expect(plot.locator("canvas").first()).toBeVisible();
  // axis titles carry quantity and unit; ticks are decades with SI prefixes
  await expect(plot).toHaveAttribute("data-y-title", "current iout (A)");
  await expect(plot).toHaveAttribute("data-x-title", "iin (A)");
  await expect(plot).toHaveAttribute("data-y-ticks", /yA.*aA.*fA.*pA/);
  // the legend shows the last point's values, not dashes, until hovered
  await expect(page.locator(".u-legend").first()).toContainText("pA");
  // the server's drawing of the same plot has given way to the interactive one
  await expect(page.locator("[data-slot=first-look]")).toHaveCount(0);
  await shot(page, "decades");

  // without scripts the page still shows that plot, drawn by the server: title, axis titles with units, decades
  const look = await withoutScripts(page, "first-look");
  await expect(look).toContainText("iout over iin");
  await expect(look).toContainText("current iout (A)");
  await expect(look).toContainText("iin (A)");
  await expect(look).toContainText("fA");
  await expect(look.locator("path")).toHaveCount(1);
  await look.page().context().close();

  // the page still answers: linear and back to log, the ticks redraw each time
  const log = panel.getByLabel("log iout");
  await log.uncheck();
  await expect(plot).not.toHaveAttribute("data-y-ticks", /yA/);
  await log.check();
  await expect(plot).toHaveAttribute("data-y-ticks", /yA/);

  // the notation toggle writes the same values in scientific notation, and back
  await page.getByTestId("notation-toggle").first().click();
  await expect(plot).toHaveAttribute("data-y-ticks", /e-2\d A/);
  await page.getByTestId("notation-toggle").first().click();
  await expect(plot).toHaveAttribute("data-y-ticks", /yA/);

  // at phone width the 14-decade x axis labels only the decades it has room for (2 to 5), so they never overlap
  await expect(plot).toHaveAttribute("data-x-ticks", /^([^|]+\|){5,}[^|]+$/);
  await page.setViewportSize({ width: 390, height: 844 });
  await expect(plot).toHaveAttribute("data-x-ticks", /^([^|]+\|){1,4}[^|]+$/);
  expect(errors).toEqual([]);
});

test("the Map of a grid has labelled axes, square cells and a legend in the value's unit", async ({ page }) => {
  await signIn(page);
  await page.goto("/w/lm64-edge-row");
  await page.getByRole("link", { name: /Newest run of Smoothing grid .*: done/ }).click();
  // one point of a grid opens on its Map
  await expect(page.getByRole("tab", { name: "Map" })).toHaveAttribute("aria-selected", "true");
  await page.getByRole("tab", { name: "Map" }).click();
  const map = page.locator("[data-slot=heat-map]");
  await expect(map).toBeVisible();
  const box = (await map.boundingBox())!;
  expect(Math.abs(box.width - box.height)).toBeLessThan(4); // 32 × 32 cells, square
  await expect(page.locator("[data-slot=map-row-axis]")).toContainText("31");
  await expect(page.locator("[data-slot=map-col-axis]")).toContainText("16");
  await expect(page.locator("[data-slot=map-legend]")).toContainText("(A)");
  await expect(page.locator("[data-slot=map-legend]")).toContainText("pA");
  await map.hover();
  await expect(page.locator("[data-slot=map-readout]")).toContainText(/A$/);
  await shot(page, "map");

  // without scripts the page shows the same map, drawn by the server, with its axes and legend
  const look = await withoutScripts(page, "first-look-map");
  await expect(look).toContainText("|current");
  await expect(look).toContainText("31");
  await expect(look).toContainText("pA");
  await look.page().context().close();
});

test("at phone width no main page scrolls sideways, and the header is a menu", async ({ browser }) => {
  test.setTimeout(180_000);
  const context = await browser.newContext({ viewport: { width: 390, height: 844 } });
  const page = await context.newPage();
  await signIn(page);
  const widths: Record<string, number> = {};
  const measure = async (url: string) => {
    await page.goto(url);
    await page.waitForLoadState("networkidle");
    widths[url] = await page.evaluate(() => document.documentElement.scrollWidth);
  };
  await page.goto("/w/lm64-edge-row");
  await expect(page.locator("[data-slot=header-menu] summary")).toBeVisible();
  await expect(page.getByRole("link", { name: /Newest run of/ }).first()).toBeVisible();
  const runs = await page
    .getByRole("link", { name: /Newest run of/ })
    .evaluateAll((as) => as.map((a) => a.getAttribute("href")!));
  const pages = [
    "/",
    "/w/lm64-edge-row",
    "/w/lm64-edge-row/n/lm-64-edge-row",
    "/w/lm64-edge-row/members",
    "/settings",
    "/inbox",
    ...runs.slice(0, 4),
    "/w/lm64-edge-row/n/lm-64-edge-row/compare",
  ];
  for (const url of pages) await measure(url);
  await page.goto(runs[0]);
  await shot(page, "phone-run");
  await context.close();
  expect(Object.entries(widths).filter(([, w]) => w > 390)).toEqual([]);
});

test("the structure view lists a node's devices and draws a small network", async ({ page }) => {
  await signIn(page);
  await page.goto("/w/lm64-edge-row/n/lm-64-edge-row");
  await page.getByRole("tab", { name: "Structure" }).click();
  const structure = page.getByRole("region", { name: "Structure" });
  await expect(structure.locator("[data-slot=structure-graph]")).toBeVisible();
  await expect(structure.locator("[data-device=lat0]")).toHaveCount(1);
  await structure.getByLabel("Search the structure").fill("x5");
  const nodes = page.getByRole("table", { name: "Nodes and their devices" });
  const x5 = nodes.locator("tbody tr", { hasText: /^x5/ }).first();
  await expect(x5).toContainText("lat4");
  await expect(x5).toContainText("lat5");
  await expect(x5).toContainText("out5");
  await expect(page.getByRole("table", { name: "Devices and their nodes" }).locator("tbody")).toContainText("lat5");
  await shot(page, "structure");
  // back to the text: the editor kept its place
  await page.getByRole("tab", { name: "Text" }).click();
  await expect(page.locator(".cm-content")).toContainText("network");
});

test("the compare page sets two commits' mismatch budgets side by side", async ({ page }) => {
  await signIn(page, "reviewer@larkspur.example");
  await page.goto("/w/lm64-edge-row/n/divider-mismatch-study/compare");
  const section = page.locator("[data-slot=sensitivity-changes]");
  await section.getByRole("button", { name: "Compare the mismatch budgets" }).click();
  const table = section.getByRole("table", { name: "Sensitivity changes" });
  await expect(table.locator("tr[data-probe=lnratio]")).toContainText(/m[12]/);
  await expect(section).toContainText("First-order model estimates");
  await section.screenshot({ path: "test-results/browser/notebook-sensitivity-changes.png" });
});

test("in the editor Enter breaks the line, } steps over, and current( offers the devices", async ({ page }) => {
  await signIn(page);
  await page.goto("/w/lm64-edge-row");
  await page.getByLabel("Upload a .runnel file").setInputFiles({
    name: "keys.runnel",
    mimeType: "text/plain",
    buffer: Buffer.from("network keys\nrail vdd = 1.8\nrail gnd = 0\nnfet m1 gate=vdd source=x drain=gnd\n"),
  });
  await expect(page).toHaveURL(/\/w\/lm64-edge-row\/n\/keys(-\d+)?$/);
  const editor = page.locator(".cm-content");
  await expect(editor).toContainText("network keys");
  await editor.click();
  await page.keyboard.press("ControlOrMeta+End");
  // a completion list is open after "probe v = volt"; Enter breaks the line instead of accepting
  await page.keyboard.type("probe v = volt");
  await expect(page.locator(".cm-tooltip-autocomplete")).toBeVisible();
  await page.waitForTimeout(200); // a person reads the list first (the editor ignores keys just after it opens)
  await page.keyboard.press("Enter");
  await page.keyboard.type("# next");
  const text = () => editor.evaluate((el) => (el as HTMLElement).innerText);
  expect(await text()).toMatch(/probe v = volt\n# next/);
  // Tab accepts the first option, and current( opens the list of devices, injects and rails
  await page.keyboard.press("Enter");
  await page.keyboard.type("probe w = curr");
  await expect(page.locator(".cm-tooltip-autocomplete")).toBeVisible();
  await page.waitForTimeout(200);
  await page.keyboard.press("Tab");
  await expect(page.locator(".cm-tooltip-autocomplete")).toContainText("m1");
  await page.keyboard.press("Escape");
  expect(await text()).toMatch(/probe w = current\(\)/);
  // a typed } after the inserted one: one brace, on its own line
  await page.keyboard.press("ControlOrMeta+End");
  await page.keyboard.press("Enter");
  await page.keyboard.type("for k in 0..2 {");
  await page.keyboard.press("Enter");
  await page.keyboard.type("nfet a{k} gate=vdd source=y{k} drain=gnd");
  await page.keyboard.press("Enter");
  await page.keyboard.type("}");
  const after = await text();
  expect(after.match(/\}/g)?.length).toBe(3); // a{k}, y{k} and the block's one brace
  expect(after.trimEnd()).toMatch(/drain=gnd\n\}$/);
});
