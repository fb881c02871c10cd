import { expect, type Page } from "@playwright/test";

/** Signs `page` in as a demo account (the demo's shared password), then to `next` when given; waits to be in. */
export async function signIn(page: Page, email = "designer@larkspur.example", next?: string): Promise<void> {
  await page.goto(next ? `/signin?next=${encodeURIComponent(next)}` : "/signin");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill("larkspur-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page).not.toHaveURL(/\/signin/);
}
