/** The development mailbox: what the local SMTP sink received (see ./mail and scripts/lib/mail-sink.ts). */
import { desc } from "drizzle-orm";
import { db } from "@/db";
import { devMail } from "@/db/schema";

export interface MailboxMessage {
  id: number;
  from: string;
  to: string;
  subject: string;
  text: string;
  receivedAt: Date;
}

/** The newest `limit` messages, newest first. */
export function listMailbox(limit = 100): MailboxMessage[] {
  return db()
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
    .limit(limit)
    .all();
}
