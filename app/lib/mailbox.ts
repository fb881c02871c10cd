/**
 * The development mailbox: what the local SMTP sink received (see ./mail and
 * scripts/lib/mail-sink.ts), as one signed-in person may read it.
 *
 * Contract
 * - A reader sees a message when one of its recipients is the reader's own
 *   address, or when it carries the link of an invitation to a workspace the
 *   reader owns (so an owner can hand an invitation on in the demo). Nothing
 *   else: not other people's mentions, not other workspaces' invitations.
 * - Whether the mailbox exists at all is `mailboxEnabled()` (./mail).
 */
import { and, desc, eq, inArray } from "drizzle-orm";
import { db } from "@/db";
import { devMail, invitations, memberships } from "@/db/schema";
import { secretHash } from "./secrets";

export interface MailboxMessage {
  id: number;
  from: string;
  to: string;
  subject: string;
  text: string;
  receivedAt: Date;
}

/** The invitation tokens a message's text carries (`/invite/<43 base64url characters>`). */
export function invitationTokensIn(text: string): string[] {
  return [...text.matchAll(/\/invite\/([A-Za-z0-9_-]{43})(?![A-Za-z0-9_-])/g)].map((m) => m[1]);
}

/** True when `email` is one of the message's comma-separated envelope recipients. */
function addressedTo(to: string, email: string): boolean {
  const me = email.trim().toLowerCase();
  return to.split(",").some((r) => r.trim().toLowerCase() === me);
}

/** The newest `limit` messages `reader` may see (module contract), newest first; scans at most `scan` messages. */
export function listMailbox(reader: { userId: string; email: string }, limit = 100, scan = 2000): MailboxMessage[] {
  const d = db();
  const recent = d
    .select({
      id: devMail.id,
      from: devMail.from,
      to: devMail.to,
      subject: devMail.subject,
      text: devMail.text,
      receivedAt: devMail.receivedAt,
    })
    .from(devMail)
    .orderBy(desc(devMail.receivedAt), desc(devMail.id))
    .limit(scan)
    .all();
  const owned = d
    .select({ workspaceId: memberships.workspaceId })
    .from(memberships)
    .where(and(eq(memberships.userId, reader.userId), eq(memberships.role, "owner")))
    .all()
    .map((m) => m.workspaceId);
  const tokenHashes = recent.flatMap((m) =>
    addressedTo(m.to, reader.email) ? [] : invitationTokensIn(m.text).map(secretHash),
  );
  const ownInvitations = new Set(
    owned.length === 0 || tokenHashes.length === 0
      ? []
      : d
          .select({ tokenHash: invitations.tokenHash })
          .from(invitations)
          .where(and(inArray(invitations.workspaceId, owned), inArray(invitations.tokenHash, tokenHashes)))
          .all()
          .map((r) => r.tokenHash),
  );
  return recent
    .filter(
      (m) =>
        addressedTo(m.to, reader.email) || invitationTokensIn(m.text).some((t) => ownInvitations.has(secretHash(t))),
    )
    .slice(0, limit);
}
