import fs from "node:fs";
import { expect, test, type APIRequestContext, type Browser, type Page } from "@playwright/test";
import { signIn } from "./sign-in";

/**
 * Compare and review at the size of real work: the LM-64 edge row (64 taps, 66
 * probes, examples/row64.runnel) with a 1,000-point sweep of the lateral gate,
 * committed twice (the output devices' width changed) and run to the end on
 * the server. The designer reads the per-probe overlays and summary, pages
 * through node voltages sorted by |Δ|, sees the changed token marked in the
 * text diff, and opens a thread whose comment links the run by its bare id,
 * warns about a bad one and mentions the reviewer by completion; the reviewer
 * sees it in the inbox, signs off through the confirmation and withdraws.
 * Screenshots go to test-results/browser/compare-sweep-*.png.
 */
const WS = "lm64-edge-row";
// a step that cannot happen fails within seconds instead of waiting out the whole (long) test
test.use({ actionTimeout: 20_000 });
const shot = (page: Page, name: string) =>
  page.screenshot({ path: `test-results/browser/compare-sweep-${name}.png`, fullPage: true });

async function reviewerPage(browser: Browser, baseURL: string): Promise<Page> {
  const page = await (await browser.newContext({ baseURL, viewport: { width: 1280, height: 900 } })).newPage();
  await signIn(page, "reviewer@larkspur.example");
  return page;
}

async function unread(page: Page): Promise<number> {
  const label = (await page.getByTestId("inbox-badge").getAttribute("aria-label")) ?? "";
  return Number(/(\d+) unread/.exec(label)?.[1] ?? 0);
}

/** The edge row with a 1,000-point sweep of vh, its output devices `out` wide. */
function rowText(out: string): string {
  const text = fs.readFileSync("examples/row64.runnel", "utf8");
  const outputs = /(nfet out\{k\} gate=gv source=x\{k\} drain=vdd) w=1u/;
  expect(outputs.test(text), "examples/row64.runnel still has its output devices").toBe(true);
  return `${text.replace(outputs, `$1 w=${out}`)}\nsweep vh from 0.65 to 0.85 points 1000\n`;
}

async function runToEnd(request: APIRequestContext, headers: Record<string, string>, commit: string) {
  const started = await request.post("/api/runs", { headers, data: { commit } });
  expect(started.status(), await started.text()).toBe(201);
  const id = ((await started.json()) as { run: { id: string } }).run.id;
  await expect
    .poll(async () => ((await (await request.get(`/api/runs/${id}`)).json()) as { run: { state: string } }).run.state, {
      timeout: 240_000,
      intervals: [1000],
    })
    .toBe("done");
  return id;
}

test("a 1,000-point sweep compared, then reviewed through a thread, the inbox and a sign-off", async ({
  page,
  browser,
  baseURL,
}) => {
  test.setTimeout(420_000);
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  await page.setViewportSize({ width: 1280, height: 900 });
  const reviewer = await reviewerPage(browser, baseURL!);
  await reviewer.goto("/inbox");
  const unreadBefore = await unread(reviewer);

  // two commits of the row, the second with wider output devices, each run to the end (1,000 points apiece)
  await signIn(page, "designer@larkspur.example");
  const headers = { origin: baseURL! };
  const made = await page.request.post(`/api/w/${WS}/networks`, {
    headers,
    data: { name: "Edge row vh sweep", text: rowText("1u"), message: "Lateral gate swept over 1,000 points" },
  });
  expect(made.status(), await made.text()).toBe(201);
  const { network, commit: first } = (await made.json()) as {
    network: { id: string; slug: string };
    commit: { id: string };
  };
  const next = await page.request.post(`/api/networks/${network.id}/commits`, {
    headers,
    data: { parent: first.id, text: rowText("1.2u"), message: "Output devices 1.2u wide" },
  });
  expect(next.status(), await next.text()).toBe(201);
  const second = ((await next.json()) as { commit: { id: string } }).commit;
  await runToEnd(page.request, headers, first.id);
  const toRun = await runToEnd(page.request, headers, second.id);

  const series: { names: number; probes: number }[] = [];
  page.on("response", async (r) => {
    if (!r.url().includes("/api/compare/series") || r.status() !== 200) return;
    const j = (await r.json()) as { names: string[]; to: { probes: unknown[] } };
    series.push({ names: j.names.length, probes: j.to.probes.length });
  });
  await page.goto(`/w/${WS}/n/${network.slug}/compare?from=${first.id}&to=${second.id}`);

  // the text diff: the changed width is marked inside the line, and the line is in view at 1280 px
  const facing = page.getByRole("table", { name: "Facing-columns diff" });
  const now = facing.locator('[data-line="changed"] mark[data-mark="now"]').first();
  await expect(now).toContainText("1.2u");
  await expect(now).toBeInViewport();

  // the expectations of both newest runs, before → after: the top of the sweep leaves weak inversion in both
  const checks = page.getByRole("region", { name: "Expectations" });
  await expect(checks.locator("tr[data-expectation-change]")).toHaveCount(6);
  await expect(checks.locator('tr[data-expectation="weak_inversion"]')).toHaveAttribute(
    "data-expectation-change",
    "still failing",
  );

  // one analysis: 1,000 values of vh matched point by point
  const analysis = page.getByRole("article", { name: /^Analysis / });
  await expect(analysis).toContainText("vh (1,000 values)");
  await expect(analysis).toContainText("1,000 points matched");

  // the per-probe summary: all 66 probes, largest change first, where it happened with the swept value and its unit
  const summary = analysis.getByTestId("probe-summary");
  await expect(summary.locator("tbody tr")).toHaveCount(12);
  await analysis.getByRole("button", { name: "show all 66 probes (54 more)" }).click();
  await expect(summary.locator("tbody tr")).toHaveCount(66);
  await expect(summary.getByRole("columnheader", { name: /largest change/ })).toHaveAttribute(
    "aria-sort",
    "descending",
  );
  await expect(summary.locator("tbody tr").first().locator("td").nth(3)).toHaveText(/^vh = \d[\d.]* m?V$/);
  await summary.getByRole("button", { name: "probe" }).click();
  await expect(summary.locator("tbody tr").first()).toHaveAttribute("data-probe", "contrast");

  // the overlays: the four probes that moved most, each with both runs along vh and the relative change beneath
  const overlays = analysis.getByTestId("overlays");
  await expect(overlays.locator("figure[data-overlay]")).toHaveCount(4);
  const fig = overlays.locator("figure[data-overlay]").first();
  await expect(fig.locator("canvas")).toHaveCount(2);
  await expect(fig.locator(".u-legend").first()).toContainText(`before ${first.id.slice(0, 7)}`);
  await expect(fig.locator(".u-legend").first()).toContainText(`after ${second.id.slice(0, 7)}`);
  await expect(fig).toContainText("relative change");
  // only the curves drawn were sent; ticking another probe fetches it
  expect(series.at(-1)).toEqual({ names: 66, probes: 4 });
  const unticked = overlays.getByRole("checkbox", { checked: false }).first();
  const extra = (await unticked.locator("xpath=..").innerText()).trim();
  await unticked.check();
  await expect(overlays.locator(`figure[data-overlay="${extra}"]`)).toBeVisible();
  await expect(overlays.locator("figure[data-overlay]")).toHaveCount(5);
  expect(series.at(-1)).toEqual({ names: 66, probes: 5 });
  await shot(page, "compare");

  // the header's notation toggle rewrites the values the server wrote too: the tolerances, the changes by kind
  const moved = page.getByTestId("moved-summary");
  const kinds = analysis.getByTestId("kind-summary");
  await expect(moved).toContainText(/currents [\d.]+ [afpnµm]?A, voltages [\d.]+ [afpnµm]?V/);
  await expect(kinds).toContainText(/[+−][\d.]+ [µm]?V/);
  await page.getByTestId("notation-toggle").first().click();
  await expect(moved).toContainText(/currents [\d.]+e-\d+ A, voltages [\d.]+e-\d+ V/);
  await expect(kinds).toContainText(/[+−][\d.]+e-\d+ V/);
  await page.getByTestId("notation-toggle").first().click();
  await expect(moved).toContainText(/currents [\d.]+ [afpnµm]?A/);

  // node voltages a page at a time, sorted on the server by |Δ|
  await analysis.getByRole("button", { name: /node voltages: [\d,]+ of [\d,]+ moved/ }).click();
  const nodes = analysis.getByRole("table", { name: "node voltages" });
  await expect(nodes.locator("tbody tr[data-entity]")).toHaveCount(25);
  const mags = async () =>
    (await nodes.locator("tbody tr[data-entity]").evaluateAll((rows) => rows.map((r) => r.getAttribute("data-abs"))))
      .map(Number)
      .map(Math.abs);
  const page1 = await mags();
  expect(page1.every((v, i) => i === 0 || v <= page1[i - 1])).toBe(true);
  const names1 = await nodes.locator("tbody tr[data-entity]").evaluateAll((r) => r.map((x) => x.dataset.entity));
  await analysis.getByRole("button", { name: "later ›" }).click();
  await expect(analysis.getByText(/^page 2 of \d+$/)).toBeVisible();
  await expect(nodes.locator("tbody tr[data-entity]").first()).not.toHaveAttribute("data-entity", names1[0]!);
  const page2 = await mags();
  expect(page2.every((v, i) => i === 0 || v <= page2[i - 1])).toBe(true);
  expect(page2[0]).toBeLessThanOrEqual(page1[page1.length - 1]);

  // a thread from the top of the page: a bare run id becomes a card, a bad id warns, @rev completes to the reviewer
  await page.getByText("Start a thread on this commit").click();
  await page.getByLabel("Thread title").fill("Wider outputs lift every node by about the same");
  const box = page.getByRole("combobox", { name: "First comment" });
  await box.fill(`Every node rose by a few mV over the whole sweep; run ${toRun} has it. Also r_nosuchrunabcdefg. `);
  await box.press("End");
  await box.pressSequentially("@rev");
  const members = page.getByRole("listbox", { name: "Members" });
  await expect(members.getByRole("option").first()).toContainText("Ruth Calder");
  await expect(members.getByRole("option").first()).toContainText("@reviewer");
  await box.press("Enter");
  await expect(box).toHaveValue(/@reviewer $/);
  await box.pressSequentially("please check the edge.");
  const preview = page.getByLabel("Preview");
  await expect(preview.locator(`[data-run-card="${toRun}"]`)).toBeVisible();
  await expect(preview.getByTestId("preview-warnings")).toContainText("r_nosuchrunabcdefg");
  await expect(preview).toContainText("Notifies Ruth Calder (@reviewer)");
  await page.getByRole("button", { name: "Open thread" }).click();
  await expect(page).toHaveURL(/\/threads\/t_/);
  const comments = page.getByRole("list", { name: "Comments" }).getByRole("listitem");
  await expect(comments.first().locator(`[data-run-card="${toRun}"]`)).toContainText("done");
  await expect(comments.first().locator("[data-run-card]")).toHaveCount(1);
  await expect(comments.first()).toContainText("r_nosuchrunabcdefg");
  const threadUrl = page.url();

  // the reviewer: one more unread item, the mention, which leads to the thread
  await reviewer.goto("/inbox");
  expect(await unread(reviewer)).toBe(unreadBefore + 1);
  await reviewer
    .getByRole("list", { name: "Inbox items" })
    .getByRole("link", { name: /Teo Brandt mentioned you in “Wider outputs lift every node/ })
    .click();
  await expect(reviewer).toHaveURL(new RegExp(`${new URL(threadUrl).pathname}#c_`));

  // sign-off through the confirmation, which names the 1,000-point run; then withdrawn
  await reviewer.getByRole("button", { name: "Sign off…" }).click();
  const confirm = reviewer.getByRole("dialog", { name: "Sign off this commit?" });
  await expect(confirm.getByRole("list", { name: "Runs being signed off" })).toContainText(toRun.slice(0, 10));
  // The sweep takes the row out of weak inversion and below its contrast target: a reason is required.
  await expect(confirm.getByTestId("signoff-expectations")).toHaveText(
    "Expectations: 2 of 6 failing: weak_inversion, edge_contrast",
  );
  await expect(confirm.locator('[data-check="failed"]').first()).toContainText("weak_inversion");
  const signOff = confirm.getByRole("button", { name: /^Sign off \w+/ });
  await expect(signOff).toBeDisabled();
  await confirm.getByRole("textbox").fill("The sweep's top end is outside the bias range we tape out with.");
  await signOff.click();
  await expect(reviewer.getByTestId("my-verdict")).toHaveAttribute("data-state", "signed_off");
  await expect(reviewer.getByTestId("signed-off-failing").last()).toContainText(
    "Signed off although the newest run failed weak_inversion, edge_contrast",
  );
  await reviewer.getByRole("button", { name: "Withdraw my verdict" }).click();
  await expect(reviewer.getByTestId("my-verdict")).toHaveAttribute("data-state", "none");
  await expect(reviewer.getByRole("button", { name: "Sign off…" })).toBeEnabled();
  await shot(reviewer, "thread");

  // the designer's inbox has the verdict on the commit
  await page.goto("/inbox");
  await expect(page.getByRole("list", { name: "Inbox items" }).locator('[data-inbox="verdict"]').first()).toBeVisible();
  expect(errors).toEqual([]);
});
