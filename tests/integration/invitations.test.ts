/**
 * Invitations end to end through the local SMTP sink: the owner invites, the
 * mail arrives at the sink (nodemailer → smtp-server → MIME reader → dev
 * mailbox), its link works once and never again, an expired link is refused
 * with a clear page. Also the members rules (the last owner stays).
 */
import { eq } from "drizzle-orm";
import { renderToStaticMarkup } from "react-dom/server";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import MailboxPage from "@/app/dev/mailbox/page";
import { DELETE as deleteMember, PATCH as patchMember } from "@/app/api/w/[slug]/members/[userId]/route";
import { POST as postInvitation } from "@/app/api/w/[slug]/invitations/route";
import { acceptInvitation } from "@/app/invite/[token]/actions";
import InvitePage from "@/app/invite/[token]/page";
import { changeMemberRole, inviteMember, leaveWorkspace } from "@/app/w/[slug]/members/actions";
import { SESSION_COOKIE } from "@/app/lib/auth";
import { db } from "@/db";
import { DEMO_PASSWORD } from "@/scripts/seed/index";
import { invitations, memberships, users } from "@/db/schema";
import { startMailSink, storeInMailbox, type MailSink, type ReceivedMail } from "@/scripts/lib/mail-sink";
import { buildAccountsFixture, WORKSPACE, type AccountsFixture } from "../helpers/accounts";
import { form, requestContext, runAction, setRequest, SITE } from "../helpers/request-context";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

let fixture: AccountsFixture;
let sink: MailSink;
let inbox: ReceivedMail[] = [];

beforeAll(async () => {
  fixture = buildAccountsFixture();
  sink = await startMailSink({
    onMessage: (m) => {
      inbox.push(m);
      storeInMailbox(db())(m);
    },
  });
  process.env.RUNNEL_MAIL_SINK_PORT = String(sink.port);
  process.env.RUNNEL_DEMO = "1";
});
afterAll(async () => {
  fixture.dispose();
  await sink.close();
  delete process.env.RUNNEL_MAIL_SINK_PORT;
  delete process.env.RUNNEL_DEMO;
});
beforeEach(() => {
  fixture.useCopy();
  inbox = [];
});

const asOwner = () => setRequest({ cookies: { [SESSION_COOKIE]: fixture.actors.owner!.sessionId } });
const PW = "reviewer-chosen-password";

async function render(token: string): Promise<string> {
  return renderToStaticMarkup(await InvitePage({ params: Promise.resolve({ token }) }));
}

/** Invites as the owner through the members form and returns the link from the received mail. */
async function inviteByMail(email: string, role: string): Promise<string> {
  asOwner();
  const out = await runAction(inviteMember, form({ slug: WORKSPACE.slug, email, role }));
  expect(out).toMatchObject({ status: 200, state: { message: `Invitation sent to ${email} as ${role}.` } });
  expect(inbox).toHaveLength(1); // nodemailer resolves after the sink has answered 250
  const mail = inbox[0];
  expect(mail.recipients).toEqual([email]);
  expect(mail.subject).toBe("Ada Marlow invited you to LM-64 edge row on Runnel");
  const link = /http:\/\/127\.0\.0\.1:3000\/invite\/([A-Za-z0-9_-]{43})/.exec(mail.text);
  expect(link, mail.text).not.toBeNull();
  expect(mail.html).toContain(`href="${link![0]}"`);
  return link![1];
}

describe("an invitation", () => {
  it("arrives by e-mail, and its link works exactly once", async () => {
    const token = await inviteByMail("ruth.new@elsewhere.example", "reviewer");
    // the database keeps only a hash of the link's token
    expect(JSON.stringify(db().select().from(invitations).all())).not.toContain(token);
    // the dev mailbox lists it with a clickable link, for the owner who sent it
    asOwner();
    expect(renderToStaticMarkup(await MailboxPage())).toContain(`href="${SITE}/invite/${token}"`);

    // the invitee opens the link, not signed in: a form to create the account
    setRequest();
    const page = await render(token);
    expect(page).toContain("Join LM-64 edge row");
    expect(page).toContain("ruth.new@elsewhere.example");
    expect(page).toContain("Create your account");

    const accepted = await runAction(acceptInvitation, form({ token, name: "Ruth New", password: PW, confirm: PW }));
    expect(accepted).toMatchObject({ status: 303, location: "/w/lm64-edge-row" });
    const user = db().select().from(users).where(eq(users.email, "ruth.new@elsewhere.example")).get()!;
    expect(db().select().from(memberships).where(eq(memberships.userId, user.id)).get()).toMatchObject({
      workspaceId: WORKSPACE.id,
      role: "reviewer",
    });
    expect(requestContext.jar.get(SESSION_COOKIE)).toBeTruthy(); // signed in as the new account

    // the same link again: refused, with a page that says why
    setRequest();
    const again = await runAction(acceptInvitation, form({ token, name: "Mallory", password: PW, confirm: PW }));
    expect(again.status).toBe(410);
    expect(again.state?.error).toMatch(/already been used/);
    expect(await render(token)).toContain("Invitation already used");
    expect(db().select().from(users).where(eq(users.name, "Mallory")).get()).toBeUndefined();
  });

  it("for an existing account asks for its password (and signs in as it)", async () => {
    const newWs = { id: "ws_mirror", slug: "mirror-bank", name: "Mirror bank" };
    db()
      .insert((await import("@/db/schema")).workspaces)
      .values(newWs)
      .run();
    db().insert(memberships).values({ workspaceId: newWs.id, userId: "u_owner", role: "owner" }).run();
    asOwner();
    await runAction(inviteMember, form({ slug: newWs.slug, email: "viewer@larkspur.example", role: "designer" }));
    const token = /\/invite\/([A-Za-z0-9_-]{43})/.exec(inbox[0].text)![1];
    setRequest();
    expect(await render(token)).toContain("enter its password to accept");
    const wrong = await runAction(acceptInvitation, form({ token, password: "not it" }));
    expect(wrong.status).toBe(401);
    const ok = await runAction(acceptInvitation, form({ token, password: DEMO_PASSWORD }));
    expect(ok).toMatchObject({ status: 303, location: "/w/mirror-bank" });
    expect(
      db()
        .select()
        .from(memberships)
        .where(eq(memberships.workspaceId, newWs.id))
        .all()
        .map((m) => m.role)
        .sort(),
    ).toEqual(["designer", "owner"]);
  });

  it("that expired is refused with a clear page", async () => {
    const token = await inviteByMail("late@elsewhere.example", "viewer");
    db()
      .update(invitations)
      .set({ expiresAt: new Date(Date.now() - 1000) })
      .run();
    setRequest();
    const page = await render(token);
    expect(page).toContain("Invitation expired");
    expect(page).toContain("Ask the workspace owner to send a new invitation.");
    expect(page).toContain("Ada Marlow can send you a new one");
    const out = await runAction(acceptInvitation, form({ token, name: "Late", password: PW, confirm: PW }));
    expect(out).toMatchObject({ status: 410, state: { error: expect.stringMatching(/expired/) } });
  });

  it("is replaced by a new one to the same address (the old link is withdrawn)", async () => {
    const first = await inviteByMail("twice@elsewhere.example", "viewer");
    inbox = [];
    const second = await inviteByMail("twice@elsewhere.example", "designer");
    expect(await render(first)).toContain("Invitation withdrawn");
    expect(await render(second)).toContain("as designer");
  });

  it("an unknown link gets a clear page", async () => {
    expect(await render("x".repeat(43))).toContain("This invitation link is not valid");
    expect(await render("short")).toContain("Invitation not found");
  });

  it("to a member, or without a valid address or role, is refused at the field", async () => {
    asOwner();
    const member = await runAction(
      inviteMember,
      form({ slug: WORKSPACE.slug, email: "Reviewer@Larkspur.example", role: "viewer" }),
    );
    expect(member).toMatchObject({
      status: 409,
      state: { fieldErrors: { email: ["reviewer@larkspur.example is already a member of this workspace"] } },
    });
    const bad = await runAction(inviteMember, form({ slug: WORKSPACE.slug, email: "nope", role: "boss" }));
    expect(bad.status).toBe(400);
    expect(Object.keys(bad.state!.fieldErrors!).sort()).toEqual(["email", "role"]);
    expect(inbox).toHaveLength(0);
  });

  it("is not kept when the mail cannot be sent", async () => {
    const saved = process.env.RUNNEL_MAIL_SINK_PORT;
    delete process.env.RUNNEL_MAIL_SINK_PORT;
    try {
      const res = await postInvitation(
        new Request(`${SITE}/api/w/${WORKSPACE.slug}/invitations`, {
          method: "POST",
          headers: { cookie: fixture.actors.owner!.cookie, origin: SITE, host: new URL(SITE).host },
          body: JSON.stringify({ email: "lost@elsewhere.example", role: "viewer" }),
        }),
        { params: Promise.resolve({ slug: WORKSPACE.slug }) },
      );
      expect(res.status).toBe(503);
      expect((await res.json()).error).toMatch(/^e-mail is not configured: set RUNNEL_SMTP_URL/);
      expect(db().select().from(invitations).all()).toHaveLength(0);
    } finally {
      process.env.RUNNEL_MAIL_SINK_PORT = saved;
    }
  });
});

describe("members", () => {
  const call = (fn: typeof patchMember, method: string, userId: string, who: "owner" | "viewer", body?: unknown) =>
    fn(
      new Request(`${SITE}/api/w/${WORKSPACE.slug}/members/${userId}`, {
        method,
        headers: { cookie: fixture.actors[who]!.cookie, origin: SITE, host: new URL(SITE).host },
        body: body === undefined ? undefined : JSON.stringify(body),
      }),
      { params: Promise.resolve({ slug: WORKSPACE.slug, userId }) },
    );

  it("the last owner can be neither demoted nor removed, and cannot leave", async () => {
    const demote = await call(patchMember, "PATCH", "u_owner", "owner", { role: "designer" });
    expect(demote.status).toBe(409);
    expect((await demote.json()).error).toBe(
      "the workspace needs at least one owner: make another member an owner first",
    );
    expect((await call(deleteMember, "DELETE", "u_owner", "owner")).status).toBe(409);
    asOwner();
    expect(await runAction(leaveWorkspace, form({ slug: WORKSPACE.slug }))).toMatchObject({
      status: 409,
      state: { error: expect.stringMatching(/at least one owner/) },
    });
  });

  it("with a second owner, the first may step down or leave", async () => {
    asOwner();
    expect(
      (await runAction(changeMemberRole, form({ slug: WORKSPACE.slug, userId: "u_designer1", role: "owner" }))).status,
    ).toBe(200);
    expect((await call(patchMember, "PATCH", "u_owner", "owner", { role: "reviewer" })).status).toBe(200);
    // now a reviewer: managing is no longer allowed
    expect((await call(patchMember, "PATCH", "u_viewer", "owner", { role: "designer" })).status).toBe(403);
    expect(await runAction(leaveWorkspace, form({ slug: WORKSPACE.slug }))).toMatchObject({
      status: 303,
      location: "/",
    });
  });

  it("any member may leave; a person who is not a member is 404", async () => {
    expect((await call(deleteMember, "DELETE", "u_viewer", "viewer")).status).toBe(204);
    expect((await call(deleteMember, "DELETE", "u_viewer", "viewer")).status).toBe(404);
    expect((await call(patchMember, "PATCH", "u_outsider", "owner", { role: "viewer" })).status).toBe(404);
    expect((await call(patchMember, "PATCH", "u_reviewer", "owner", { role: "chief" })).status).toBe(400);
  });
});
