/**
 * Invitations: an owner invites an e-mail address into a workspace with a
 * role; the address gets a link `/invite/<token>` that works once and expires
 * after INVITATION_LIFETIME_MS. Accepting makes the membership for the
 * account with THAT address (creating the account if there is none), so the
 * link alone cannot put another account into the workspace.
 *
 * Invariants: the token exists only in the e-mail (the database keeps its
 * SHA-256); at most one pending invitation per (workspace, address) — a new
 * one revokes the old; consuming an invitation and making the membership
 * happen in one transaction, guarded by `accepted_at IS NULL`.
 */
import { and, desc, eq, gt, isNull } from "drizzle-orm";
import { z } from "zod";
import { db } from "@/db";
import { invitations, memberships, users, workspaces, type Role } from "@/db/schema";
import { emailSchema } from "./accounts";
import { RequestError } from "./http";
import { sendMail } from "./mail";
import { roleSchema } from "./members";
import type { Actor, WorkspaceRef } from "./policy";
import { newSecret, secretHash } from "./secrets";
import { newId } from "@/db/ids";
import { immediate } from "./db-busy";

export const INVITATION_LIFETIME_MS = 7 * 24 * 60 * 60 * 1000;

export const inviteSchema = z.object({ email: emailSchema, role: roleSchema });

export interface PendingInvitation {
  id: string;
  email: string;
  role: Role;
  expiresAt: Date;
  createdAt: Date;
}

/** Pending (not accepted, not revoked, not expired) invitations of a workspace, newest first. */
export function listPendingInvitations(workspaceId: string, now = new Date()): PendingInvitation[] {
  return db()
    .select({
      id: invitations.id,
      email: invitations.email,
      role: invitations.role,
      expiresAt: invitations.expiresAt,
      createdAt: invitations.createdAt,
    })
    .from(invitations)
    .where(
      and(
        eq(invitations.workspaceId, workspaceId),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
        gt(invitations.expiresAt, now),
      ),
    )
    .orderBy(desc(invitations.createdAt))
    .all();
}

function invitationMail(input: { inviter: string; workspace: string; role: Role; link: string; expiresAt: Date }) {
  const article = input.role === "owner" ? "an" : "a";
  const until = `${input.expiresAt.toISOString().slice(0, 16).replace("T", " ")} UTC`;
  const subject = `${input.inviter} invited you to ${input.workspace} on Runnel`;
  const text = [
    `${input.inviter} invited you to the workspace "${input.workspace}" on Runnel as ${article} ${input.role}.`,
    "",
    "Accept the invitation:",
    input.link,
    "",
    `The link works once and expires on ${until}.`,
    "If you did not expect this invitation, ignore this message.",
  ].join("\n");
  const esc = (s: string) =>
    s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
  const html =
    `<p>${esc(input.inviter)} invited you to the workspace “${esc(input.workspace)}” on Runnel as ${article} ${esc(input.role)}.</p>` +
    `<p><a href="${esc(input.link)}">Accept the invitation</a></p>` +
    `<p>The link works once and expires on ${esc(until)}. If you did not expect this invitation, ignore this message.</p>`;
  return { subject, text, html };
}

/**
 * Invites `email` into the workspace and sends the e-mail. 409 when the
 * address is already a member. When sending fails the invitation is removed
 * again and the MailError propagates.
 */
export async function inviteMember(input: {
  workspace: WorkspaceRef;
  email: string;
  role: Role;
  inviter: Actor;
  baseUrl: string;
  now?: Date;
}): Promise<PendingInvitation> {
  const now = input.now ?? new Date();
  const email = input.email.trim().toLowerCase();
  const token = newSecret();
  const row = {
    id: newId("inv"),
    workspaceId: input.workspace.id,
    email,
    role: input.role,
    tokenHash: secretHash(token),
    invitedBy: input.inviter.userId,
    expiresAt: new Date(now.getTime() + INVITATION_LIFETIME_MS),
    createdAt: now,
  };
  immediate(db(), (tx) => {
    const member = tx
      .select({ id: users.id })
      .from(users)
      .innerJoin(memberships, and(eq(memberships.userId, users.id), eq(memberships.workspaceId, input.workspace.id)))
      .where(eq(users.email, email))
      .get();
    if (member) throw new RequestError(409, `email: ${email} is already a member of this workspace`);
    tx.update(invitations)
      .set({ revokedAt: now })
      .where(
        and(
          eq(invitations.workspaceId, input.workspace.id),
          eq(invitations.email, email),
          isNull(invitations.acceptedAt),
          isNull(invitations.revokedAt),
        ),
      )
      .run();
    tx.insert(invitations).values(row).run();
  });
  const link = `${input.baseUrl.replace(/\/+$/, "")}/invite/${token}`;
  try {
    await sendMail({
      to: email,
      ...invitationMail({
        inviter: input.inviter.name,
        workspace: input.workspace.name,
        role: input.role,
        link,
        expiresAt: row.expiresAt,
      }),
    });
  } catch (e) {
    db().delete(invitations).where(eq(invitations.id, row.id)).run();
    throw e;
  }
  return { id: row.id, email, role: row.role, expiresAt: row.expiresAt, createdAt: now };
}

/** Revokes a pending invitation of the workspace; 404 when there is none with that id. */
export function revokeInvitation(workspaceId: string, invitationId: string, now = new Date()): void {
  const r = db()
    .update(invitations)
    .set({ revokedAt: now })
    .where(
      and(
        eq(invitations.id, invitationId),
        eq(invitations.workspaceId, workspaceId),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
      ),
    )
    .run();
  if (r.changes !== 1) throw new RequestError(404, "no pending invitation with that id in this workspace");
}

export type InvitationState = "valid" | "used" | "expired" | "revoked";

export type InvitationView =
  | { state: "unknown" }
  | {
      state: InvitationState;
      email: string;
      role: Role;
      workspace: { slug: string; name: string };
      inviterName: string | null;
      expiresAt: Date;
      /** The account with the invited address, if there is one. */
      account: { id: string; name: string } | null;
    };

/** What the link `/invite/<token>` stands for. */
export function lookupInvitation(token: string, now = new Date()): InvitationView {
  if (token.length < 20 || token.length > 100) return { state: "unknown" };
  const inv = db()
    .select({
      email: invitations.email,
      role: invitations.role,
      expiresAt: invitations.expiresAt,
      acceptedAt: invitations.acceptedAt,
      revokedAt: invitations.revokedAt,
      invitedBy: invitations.invitedBy,
      slug: workspaces.slug,
      name: workspaces.name,
    })
    .from(invitations)
    .innerJoin(workspaces, eq(workspaces.id, invitations.workspaceId))
    .where(eq(invitations.tokenHash, secretHash(token)))
    .get();
  if (!inv) return { state: "unknown" };
  const state: InvitationState = inv.acceptedAt
    ? "used"
    : inv.revokedAt
      ? "revoked"
      : inv.expiresAt <= now
        ? "expired"
        : "valid";
  const inviter = inv.invitedBy
    ? db().select({ name: users.name }).from(users).where(eq(users.id, inv.invitedBy)).get()
    : undefined;
  const account =
    db().select({ id: users.id, name: users.name }).from(users).where(eq(users.email, inv.email)).get() ?? null;
  return {
    state,
    email: inv.email,
    role: inv.role,
    workspace: { slug: inv.slug, name: inv.name },
    inviterName: inviter?.name ?? null,
    expiresAt: inv.expiresAt,
    account,
  };
}

export class InvitationUnusable extends Error {
  constructor(readonly state: Exclude<InvitationState, "valid"> | "unknown") {
    super(INVITATION_PROBLEMS[state]);
  }
}

export const INVITATION_PROBLEMS: Record<Exclude<InvitationState, "valid"> | "unknown", string> = {
  unknown: "This invitation link is not valid. Check that you copied the whole link from the e-mail.",
  used: "This invitation link has already been used. Each link works once; sign in instead, or ask the workspace owner for a new invitation.",
  expired: "This invitation link has expired. Ask the workspace owner to send a new invitation.",
  revoked: "This invitation was withdrawn by the workspace owner. Ask them for a new one if you still need access.",
};

/**
 * Consumes the invitation and makes the membership, in one transaction.
 * `as` is the existing account with the invited address, or a new account to
 * create with it. Throws InvitationUnusable when the link is unknown, used,
 * revoked or expired (also when another request consumed it a moment ago).
 * Returns the user id and the workspace slug.
 */
export function acceptInvitation(
  token: string,
  as: { userId: string } | { newAccount: { id: string; name: string; passwordHash: string } },
  now = new Date(),
): { userId: string; slug: string } {
  return immediate(db(), (tx) => {
    const inv = tx
      .select({
        id: invitations.id,
        email: invitations.email,
        role: invitations.role,
        workspaceId: invitations.workspaceId,
      })
      .from(invitations)
      .where(eq(invitations.tokenHash, secretHash(token)))
      .get();
    if (!inv) throw new InvitationUnusable("unknown");
    let userId: string;
    if ("userId" in as) {
      const u = tx.select({ email: users.email }).from(users).where(eq(users.id, as.userId)).get();
      if (u?.email !== inv.email) throw new RequestError(409, `this invitation is for ${inv.email}`);
      userId = as.userId;
    } else {
      const existing = tx.select({ id: users.id }).from(users).where(eq(users.email, inv.email)).get();
      if (existing)
        throw new RequestError(409, `email: an account with ${inv.email} exists; sign in with its password`);
      tx.insert(users)
        .values({
          id: as.newAccount.id,
          email: inv.email,
          name: as.newAccount.name,
          passwordHash: as.newAccount.passwordHash,
        })
        .run();
      userId = as.newAccount.id;
    }
    const consumed = tx
      .update(invitations)
      .set({ acceptedAt: now, acceptedBy: userId })
      .where(
        and(
          eq(invitations.id, inv.id),
          isNull(invitations.acceptedAt),
          isNull(invitations.revokedAt),
          gt(invitations.expiresAt, now),
        ),
      )
      .run();
    if (consumed.changes !== 1) {
      const state = tx.select().from(invitations).where(eq(invitations.id, inv.id)).get()!;
      // Throwing rolls back the account made above as well.
      throw new InvitationUnusable(state.acceptedAt ? "used" : state.revokedAt ? "revoked" : "expired");
    }
    tx.insert(memberships).values({ workspaceId: inv.workspaceId, userId, role: inv.role }).onConflictDoNothing().run();
    const ws = tx.select({ slug: workspaces.slug }).from(workspaces).where(eq(workspaces.id, inv.workspaceId)).get()!;
    return { userId, slug: ws.slug };
  });
}
