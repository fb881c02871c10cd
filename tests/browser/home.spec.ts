import { expect, test } from "@playwright/test";

test("the home page shows the shell, the demo accounts, and after sign-in the demo workspace", async ({ page }) => {
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  await page.goto("/");
  await expect(page.getByRole("link", { name: "Runnel home" })).toBeVisible();
  await expect(page.getByRole("heading", { name: "Workspaces" })).toBeVisible();
  // signed out in demo mode: a sign-in prompt and the demo accounts, no workspaces
  await expect(page.getByRole("region", { name: "Demo accounts" })).toContainText("owner@larkspur.example");
  await expect(page.getByRole("list", { name: "Workspaces" })).toHaveCount(0);
  await page.getByRole("link", { name: "Sign in" }).first().click();
  await page.getByLabel("E-mail").fill("owner@larkspur.example");
  await page.getByLabel("Password").fill("larkspur-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByTestId("signed-in-as")).toHaveText("Ada Marlow");
  await expect(
    page.getByRole("list", { name: "Workspaces" }).getByRole("link", { name: "LM-64 edge row" }),
  ).toBeVisible();
  await expect(page.getByText("Results in Runnel are model estimates")).toBeVisible();
  const fonts = await page.evaluate(async () => {
    await document.fonts.ready;
    return [...document.fonts].filter((f) => f.status === "loaded").length;
  });
  expect(fonts).toBeGreaterThan(0);
  await page.screenshot({ path: "test-results/browser/home.png", fullPage: true });
  expect(errors).toEqual([]);
});

test("the health route answers with the version and db ok", async ({ request }) => {
  const res = await request.get("/api/health");
  expect(res.status()).toBe(200);
  const body = await res.json();
  expect(body.db).toBe("ok");
  expect(body.version).toMatch(/^\d+\.\d+\.\d+/);
});
