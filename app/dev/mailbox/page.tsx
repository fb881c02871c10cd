import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { Fragment } from "react";
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
 * /dev/mailbox: every message the local SMTP sink received, newest first. It
 * exists only while mail goes to that sink (`npm run demo`, tests); with
 * RUNNEL_SMTP_URL set it is a 404.
 */
export default function MailboxPage() {
  if (!mailboxEnabled()) notFound();
  const messages = listMailbox();
  return (
    <div className="max-w-3xl space-y-4">
      <h1 className="text-2xl font-semibold">Mailbox (development)</h1>
      <p className="text-sm text-stone-600">
        Mail that Runnel sent while running with its local mail sink. In production, mail goes to the SMTP server in{" "}
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
