import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { Fragment } from "react";
import { requireActor } from "@/app/lib/auth";
import { mailboxEnabled } from "@/app/lib/mail";
import { listMailbox } from "@/app/lib/mailbox";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Mailbox (development)", robots: { index: false } };

/** Plain text with http(s) links made clickable; everything else stays text (React escapes it). */
function Linked({ text }: { text: string }) {
  const parts = text.split(/(https?:\/\/[^\s<>"]+)/g);
  return (
    <>
      {parts.map((p, i) =>
        i % 2 === 1 ? (
          <a key={i} href={p} className="text-moss-700 underline break-all">
            {p}
          </a>
        ) : (
          <Fragment key={i}>{p}</Fragment>
        ),
      )}
    </>
  );
}

/**
 * /dev/mailbox: the messages of the local SMTP sink that the signed-in person
 * may read (app/lib/mailbox.ts: mail to them, and the invitations of the
 * workspaces they own), newest first. It exists only when `mailboxEnabled()`
 * (demo or development, mail to the sink, a loopback address); else a 404.
 */
export default async function MailboxPage() {
  if (!mailboxEnabled()) notFound();
  const actor = await requireActor("/dev/mailbox");
  const messages = listMailbox(actor);
  return (
    <div className="max-w-3xl space-y-4">
      <h1 className="text-2xl font-semibold">Mailbox (development)</h1>
      <p className="text-sm text-stone-600">
        This is a local mail sink: mail that Runnel sent while running in demo or development mode never left this
        machine; it was kept here instead. You see the mail addressed to you ({actor.email}) and the invitations of the
        workspaces you own. In production, mail goes to the SMTP server in{" "}
        <code className="font-mono">RUNNEL_SMTP_URL</code> and this page does not exist.
      </p>
      {messages.length === 0 ? (
        <p className="rounded border border-dashed border-stone-300 bg-white p-6 text-stone-600">No mail yet.</p>
      ) : (
        <ul className="space-y-4" aria-label="Messages">
          {messages.map((m) => (
            <li key={m.id} className="rounded border border-stone-300 bg-white p-4" aria-label={`Message to ${m.to}`}>
              <div className="text-xs text-stone-500 tabular">
                {m.receivedAt.toISOString().slice(0, 19).replace("T", " ")} UTC · from {m.from}
              </div>
              <div className="text-sm">
                to <span className="font-mono">{m.to}</span>
              </div>
              <h2 className="mt-1 font-medium">{m.subject}</h2>
              <pre className="mt-2 font-sans text-sm whitespace-pre-wrap">
                <Linked text={m.text} />
              </pre>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
