import { expect, test, type Page } from "@playwright/test";

/** A stamp that keeps names unique when the suite runs again on the same database. */
const stamp = Date.now().toString(36);
const owner = { name: "Iris Vale", email: `iris.${stamp}@elsewhere.example`, password: "iris-chooses-this-1" };
const reviewer = { name: "Rui Santos", email: `rui.${stamp}@elsewhere.example`, password: "rui-chooses-this-2" };
const workspace = { name: `Divider ${stamp}`, slug: `divider-${stamp}` };

async function signIn(page: Page, who: { email: string; password: string }) {
  await page.goto("/signin");
  await page.getByLabel("E-mail").fill(who.email);
  await page.getByLabel("Password").fill(who.password);
  await page.getByRole("button", { name: "Sign in" }).click();
}

test("sign up, create a workspace, invite a reviewer, accept from the dev mailbox, sign in as the reviewer", async ({
  page,
  browser,
}) => {
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));

  // sign up: field errors first, then an account
  await page.goto("/signup");
  await page.getByRole("button", { name: "Create account" }).click();
  await expect(page.getByText("enter your name")).toBeVisible();
  await page.getByLabel("Name").fill(owner.name);
  await page.getByLabel("E-mail").fill(owner.email);
  await page.getByLabel("Password", { exact: true }).fill(owner.password);
  await page.getByLabel("Repeat password").fill(owner.password);
  await page.getByRole("button", { name: "Create account" }).click();
  // the same answer whether or not the address had an account; then sign in
  await expect(page.getByRole("status")).toContainText("If this address had no Runnel account, it has one now");
  await page.getByRole("link", { name: "Sign in", exact: true }).last().click();
  await expect(page).toHaveURL(/\/signin/);
  await page.getByLabel("E-mail").fill(owner.email);
  await page.getByLabel("Password").fill(owner.password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByTestId("signed-in-as")).toHaveText(owner.name);
  await expect(page.getByText("You are not a member of any workspace yet")).toBeVisible();

  // a workspace the new account is not a member of does not exist for it
  expect((await page.goto("/w/lm64-edge-row"))?.status()).toBe(404);

  // create a workspace
  await page.goto("/");
  await page.getByLabel("Name").fill(workspace.name);
  await page.getByRole("button", { name: "Create workspace" }).click();
  await expect(page).toHaveURL(new RegExp(`/w/${workspace.slug}$`));
  await expect(page.getByRole("heading", { name: workspace.name })).toBeVisible();

  // invite a reviewer
  await page.getByRole("link", { name: "Members" }).click();
  await page.getByLabel("E-mail address").fill(reviewer.email);
  await page.getByLabel("Role", { exact: true }).selectOption("reviewer");
  await page.getByRole("button", { name: "Send invitation" }).click();
  await expect(page.getByRole("status")).toHaveText(`Invitation sent to ${reviewer.email} as reviewer.`);
  await expect(page.getByRole("list", { name: "Pending invitations" })).toContainText(reviewer.email);

  // the dev mailbox is closed to anonymous visitors; the owner finds the invitation there and hands on its link
  const context = await browser.newContext();
  const r = await context.newPage();
  r.on("pageerror", (e) => errors.push(e.message));
  await r.goto("/dev/mailbox");
  await expect(r).toHaveURL(/\/signin\?next=%2Fdev%2Fmailbox$/);
  await page.goto("/dev/mailbox");
  await expect(page.getByText("This is a local mail sink")).toBeVisible();
  const mail = page.getByRole("listitem", { name: `Message to ${reviewer.email}` });
  await expect(mail).toContainText(`${owner.name} invited you to ${workspace.name} on Runnel`);
  const invite = await mail.getByRole("link", { name: /\/invite\// }).getAttribute("href");
  // the reviewer, in their own browser, follows the link
  await r.goto(invite!);
  await expect(r.getByRole("heading", { name: `Join ${workspace.name}` })).toBeVisible();
  const link = r.url();
  await r.getByLabel("Name").fill(reviewer.name);
  await r.getByLabel("Password", { exact: true }).fill(reviewer.password);
  await r.getByLabel("Repeat password").fill(reviewer.password);
  await r.getByRole("button", { name: "Accept invitation" }).click();
  await expect(r).toHaveURL(new RegExp(`/w/${workspace.slug}$`));
  await expect(r.getByTestId("signed-in-as")).toHaveText(reviewer.name);
  await expect(r.getByTitle("Your role in this workspace")).toHaveText("reviewer");

  // sign out, then sign in as the reviewer
  await r.getByRole("button", { name: "Sign out" }).click();
  await expect(r.getByRole("link", { name: "Sign in", exact: true }).first()).toBeVisible();
  await signIn(r, reviewer);
  await expect(r.getByTestId("signed-in-as")).toHaveText(reviewer.name);
  const card = r.getByRole("list", { name: "Workspaces" }).getByRole("listitem").filter({ hasText: workspace.name });
  await expect(card).toContainText("reviewer");

  // a reviewer reads the members but cannot invite
  await r.goto(`/w/${workspace.slug}/members`);
  await expect(r.getByRole("table", { name: "Members" })).toContainText(owner.email);
  await expect(r.getByRole("button", { name: "Send invitation" })).toHaveCount(0);

  // the link worked once; never again
  await r.goto(link);
  await expect(r.getByRole("heading", { name: "Invitation already used" })).toBeVisible();
  await context.close();

  // the owner sees the new member
  await page.goto(`/w/${workspace.slug}/members`);
  await expect(page.getByRole("table", { name: "Members" })).toContainText(reviewer.email);
  expect(errors).toEqual([]);
});

test("an invitation is accepted by a browser that posts the form itself (no JavaScript)", async ({ page, browser }) => {
  // Before React hydrates, the accept form posts natively; under the invite page's referrer policy that
  // request must still carry its origin (a "no-referrer" policy made it Origin: null, refused with a 500).
  const invitee = { name: "Noor Haddad", email: `noor.${stamp}@elsewhere.example`, password: "noor-chooses-this-3" };
  await signIn(page, { email: "owner@larkspur.example", password: "larkspur-demo" });
  await expect(page.getByTestId("signed-in-as")).toBeVisible();
  await page.goto("/w/lm64-edge-row/members");
  await page.getByLabel("E-mail address").fill(invitee.email);
  await page.getByLabel("Role", { exact: true }).selectOption("viewer");
  await page.getByRole("button", { name: "Send invitation" }).click();
  await expect(page.getByRole("status")).toHaveText(`Invitation sent to ${invitee.email} as viewer.`);

  await page.goto("/dev/mailbox");
  const invite = await page
    .getByRole("listitem", { name: `Message to ${invitee.email}` })
    .getByRole("link", { name: /\/invite\// })
    .getAttribute("href");
  const context = await browser.newContext({ javaScriptEnabled: false });
  const r = await context.newPage();
  await r.goto(invite!);
  await expect(r.getByRole("heading", { name: "Join LM-64 edge row" })).toBeVisible();
  await r.getByLabel("Name").fill(invitee.name);
  await r.getByLabel("Password", { exact: true }).fill(invitee.password);
  await r.getByLabel("Repeat password").fill(invitee.password);
  const accepted = r.waitForResponse((res) => res.request().method() === "POST" && res.url().includes("/invite/"));
  await r.getByRole("button", { name: "Accept invitation" }).click();
  expect((await accepted).status()).toBeLessThan(500);
  await expect(r).toHaveURL(/\/w\/lm64-edge-row$/);
  await context.close();
});

test("pages send anonymous visitors to sign in and back", async ({ page }) => {
  await page.goto("/w/lm64-edge-row/members");
  await expect(page).toHaveURL(/\/signin\?next=%2Fw%2Flm64-edge-row%2Fmembers$/);
  await page.getByLabel("E-mail").fill("reviewer@larkspur.example");
  await page.getByLabel("Password").fill("larkspur-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page).toHaveURL(/\/w\/lm64-edge-row\/members$/);
  await expect(page.getByRole("heading", { name: "Members" })).toBeVisible();
});

test("a wrong password says so at the form", async ({ page }) => {
  await signIn(page, { email: "viewer@larkspur.example", password: "not-the-password" });
  await expect(page.locator("form").getByRole("alert")).toHaveText(
    "That e-mail address and password do not match an account.",
  );
  await expect(page.getByLabel("E-mail")).toHaveValue("viewer@larkspur.example");
});
