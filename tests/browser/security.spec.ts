import { expect, test, type Page } from "@playwright/test";
import { signIn as signInTo } from "./sign-in";

/** Signs in, then on to `next` (else the home page). */
const signIn = (page: Page, email: string, next = "/") => signInTo(page, email, next);

/**
 * What a browser sees of Runnel's protections: the security headers on pages
 * and API answers, pages that still run (editor, plots, live data) under the
 * Content-Security-Policy, a comment's image on another server never fetched,
 * and a cross-site form post answered 403 (not 500).
 */
const PORT = Number(process.env.RUNNEL_E2E_PORT ?? 3100);

/** Collects the browser's reports of anything the page's policy blocked. */
function cspViolations(page: Page): string[] {
  const seen: string[] = [];
  page.on("console", (m) => {
    if (/Content Security Policy|Refused to (load|execute|apply|connect|frame)/i.test(m.text())) seen.push(m.text());
  });
  return seen;
}

test("pages and API answers carry the security headers; every page gets its own nonce", async ({ request }) => {
  const a = await request.get("/signin");
  const b = await request.get("/signin");
  const csp = a.headers()["content-security-policy"];
  expect(csp).toMatch(/script-src 'self' 'nonce-[A-Za-z0-9+/=]{16,}' 'strict-dynamic'/);
  expect(csp).toContain("frame-ancestors 'none'");
  expect(csp).toContain("object-src 'none'");
  expect(csp).toContain("img-src 'self' data: blob:");
  expect(b.headers()["content-security-policy"]).not.toBe(csp);
  // Next's own inline scripts carry the nonce of their response
  const nonce = /'nonce-([^']+)'/.exec(csp)![1];
  const html = await a.text();
  expect(html).toContain(`nonce="${nonce}"`);
  expect(html.match(/<script(?![^>]*nonce=)[^>]*>/g) ?? []).toEqual([]);
  for (const r of [a, await request.get("/api/health")]) {
    expect(r.headers()["x-content-type-options"]).toBe("nosniff");
    expect(r.headers()["x-frame-options"]).toBe("DENY");
    expect(r.headers()["referrer-policy"]).toBe("same-origin");
  }
  expect((await request.get("/api/health")).headers()["content-security-policy"]).toContain("default-src 'none'");
});

test("the workbench, a run page and a thread work under the policy", async ({ page }) => {
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  const blocked = cspViolations(page);
  await signIn(page, "designer@larkspur.example", "/w/lm64-edge-row");
  await page.getByRole("list", { name: "Networks" }).getByRole("link", { name: "LM-64 edge row", exact: true }).click();
  await expect(page.locator(".cm-content")).toContainText("network");
  // the editor's checks run (in a worker) and the run list loads through SWR
  await page.locator(".cm-content").click();
  await page.keyboard.press("Control+End");
  await page.keyboard.type("\nnfet stray gate=nowhere source=x3 drain=vdd\n");
  await expect(page.locator('[data-slot="diagnostic-count"]')).toHaveText(/^[1-9]\d* errors?/);
  await page.goto("/w/lm64-edge-row");
  await page.getByRole("link", { name: /Newest run of Bias sweep.*: done/ }).click();
  await expect(page).toHaveURL(/\/runs\/r_/);
  await expect(page.locator(".uplot canvas").first()).toBeVisible();
  await page.goto("/threads/t_demo_divider_ratio");
  await expect(page.getByRole("list", { name: "Comments" }).getByRole("listitem").first()).toBeVisible();
  expect(blocked).toEqual([]);
  expect(errors).toEqual([]);
});

test("a comment's image on another server is shown as a link and never fetched", async ({ page }) => {
  const outside = `http://127.0.0.1:${PORT + 1}/bench-photo.png`;
  const fetched: string[] = [];
  page.on("request", (r) => {
    if (r.url().startsWith(`http://127.0.0.1:${PORT + 1}/`)) fetched.push(r.url());
  });
  await signIn(page, "designer@larkspur.example", "/threads/t_demo_divider_ratio");
  const comments = page.getByRole("list", { name: "Comments" }).getByRole("listitem");
  const before = await comments.count();
  await page.getByLabel("Reply").fill(`The bench photo: ![bench photo](${outside})`);
  await page.getByRole("button", { name: "Comment", exact: true }).click();
  await expect(comments).toHaveCount(before + 1);
  const last = comments.nth(before);
  await expect(last.getByRole("link", { name: /bench photo/ })).toHaveAttribute("href", outside);
  await expect(last.locator("img")).toHaveCount(0);
  await page.reload();
  await expect(comments).toHaveCount(before + 1);
  expect(fetched).toEqual([]);
});

test("a server action called from another site is refused with 403, not 500", async ({ request }) => {
  const res = await request.post("/signin", {
    headers: {
      origin: "http://evil.example",
      "next-action": "0000000000000000000000000000000000000000",
      "content-type": "text/plain;charset=UTF-8",
    },
    data: '["x"]',
  });
  expect(res.status()).toBe(403);
  expect(await res.text()).toContain("not sent from Runnel's own pages");
  // a plain cross-site form post (no JavaScript) likewise
  const form = await request.post("/signin", {
    headers: { origin: "null" },
    form: { email: "owner@larkspur.example", password: "larkspur-demo" },
  });
  expect(form.status()).toBe(403);
});
