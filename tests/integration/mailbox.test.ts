/**
 * The development mailbox: never open to anonymous visitors, never shows one
 * person another's mail, shows a workspace's owner the invitations sent from
 * it (the demo's invite → accept flow), and exists only in demo or
 * development mode on a loopback address.
 */
import { renderToStaticMarkup } from "react-dom/server";
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import MailboxPage from "@/app/dev/mailbox/page";
import { SESSION_COOKIE } from "@/app/lib/auth";
import { isLoopbackHost, mailboxEnabled } from "@/app/lib/mail";
import { newSecret, secretHash } from "@/app/lib/secrets";
import { db } from "@/db";
import { devMail, invitations, workspaces } from "@/db/schema";
import { buildAccountsFixture, WORKSPACE, type AccountsFixture, type Who } from "../helpers/accounts";
import { setRequest } from "../helpers/request-context";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

let fixture: AccountsFixture;
const ENV = { ...process.env };

beforeAll(() => {
  fixture = buildAccountsFixture();
});
afterAll(() => fixture.dispose());
beforeEach(() => {
  fixture.useCopy();
  process.env.RUNNEL_MAIL_SINK_PORT = "2525";
  process.env.RUNNEL_DEMO = "1";
  delete process.env.RUNNEL_SMTP_URL;
});
afterEach(() => {
  for (const k of ["RUNNEL_MAIL_SINK_PORT", "RUNNEL_DEMO", "RUNNEL_SMTP_URL", "RUNNEL_LISTEN_HOST"]) {
    if (ENV[k] === undefined) delete process.env[k];
    else process.env[k] = ENV[k];
  }
  vi.unstubAllEnvs();
});

const as = (who: Who) =>
  setRequest(who === "anonymous" ? {} : { cookies: { [SESSION_COOKIE]: fixture.actors[who]!.sessionId } });

/** The page as `who` sees it: its markup, or where it redirects, or "404". */
async function view(who: Who): Promise<string> {
  as(who);
  try {
    return renderToStaticMarkup(await MailboxPage());
  } catch (e) {
    const digest = String((e as { digest?: string }).digest ?? "");
    if (digest.startsWith("NEXT_REDIRECT")) return `redirect ${digest.split(";")[2]}`;
    if (digest.includes("404")) return "404";
    throw e;
  }
}

function mail(to: string, subject: string, text: string): void {
  db().insert(devMail).values({ from: "Runnel <runnel@localhost>", to, subject, text }).run();
}

/** An invitation row of `workspaceId` and the mail that carries its link; returns the token. */
function invitationMail(workspaceId: string, to: string): string {
  const token = newSecret();
  db()
    .insert(invitations)
    .values({
      id: `inv_${token.slice(0, 8)}`,
      workspaceId,
      email: to,
      role: "reviewer",
      tokenHash: secretHash(token),
      expiresAt: new Date(Date.now() + 86400_000),
    })
    .run();
  mail(to, `Invitation to ${workspaceId}`, `Open http://127.0.0.1:3000/invite/${token} to join.`);
  return token;
}

describe("the development mailbox", () => {
  it("sends anonymous visitors to sign in", async () => {
    invitationMail(WORKSPACE.id, "someone.new@elsewhere.example");
    expect(await view("anonymous")).toBe("redirect /signin?next=%2Fdev%2Fmailbox");
  });

  it("shows each person only their own mail, and a workspace's owners its invitations", async () => {
    const token = invitationMail(WORKSPACE.id, "someone.new@elsewhere.example");
    db().insert(workspaces).values({ id: "ws_other", slug: "other", name: "Other block" }).run();
    const otherToken = invitationMail("ws_other", "another.new@elsewhere.example");
    mail(fixture.actors.viewer!.email, "You were mentioned", "A note for the viewer only.");
    mail(fixture.actors.reviewer!.email, "You were mentioned", "A note for the reviewer only.");

    const owner = await view("owner");
    expect(owner).toContain(`/invite/${token}`);
    expect(owner).not.toContain(otherToken); // not an owner of that workspace
    expect(owner).not.toContain("A note for the viewer only.");
    expect(owner).toContain("local mail sink");

    for (const who of ["designer", "reviewer", "viewer", "outsider"] as const) {
      const page = await view(who);
      expect(page, who).not.toContain(token);
      expect(page, who).not.toContain(otherToken);
    }
    expect(await view("viewer")).toContain("A note for the viewer only.");
    expect(await view("viewer")).not.toContain("A note for the reviewer only.");
    expect(await view("reviewer")).toContain("A note for the reviewer only.");
  });

  it("exists only in demo or development mode, with mail going to the local sink", async () => {
    expect(mailboxEnabled()).toBe(true);
    delete process.env.RUNNEL_DEMO;
    expect(mailboxEnabled()).toBe(false);
    expect(await view("owner")).toBe("404");
    vi.stubEnv("NODE_ENV", "development");
    expect(mailboxEnabled()).toBe(true);
    vi.unstubAllEnvs();
    process.env.RUNNEL_DEMO = "1";
    process.env.RUNNEL_SMTP_URL = "smtp://mail.example.org:25";
    expect(mailboxEnabled()).toBe(false);
  });

  it("is never served by a production server bound to a non-loopback address", () => {
    vi.stubEnv("NODE_ENV", "production");
    process.env.RUNNEL_LISTEN_HOST = "127.0.0.1";
    expect(mailboxEnabled()).toBe(true);
    for (const host of ["0.0.0.0", "::", "192.0.2.10", "runnel.example.org", ""]) {
      process.env.RUNNEL_LISTEN_HOST = host;
      expect(mailboxEnabled(), host).toBe(false);
    }
    delete process.env.RUNNEL_LISTEN_HOST;
    expect(mailboxEnabled()).toBe(false);
  });

  it("knows the loopback addresses", () => {
    for (const h of ["127.0.0.1", "127.1.2.3", "localhost", "::1", "[::1]", "::ffff:127.0.0.1"])
      expect(isLoopbackHost(h), h).toBe(true);
    for (const h of ["0.0.0.0", "::", "128.0.0.1", "127.0.0.1.example.org", "10.0.0.1", undefined])
      expect(isLoopbackHost(h), String(h)).toBe(false);
  });
});
