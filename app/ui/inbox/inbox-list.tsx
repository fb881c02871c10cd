"use client";

/** The inbox's items, newest first: what happened, when, a link to its place; mark one or all read. */
import { HoverLink } from "@/app/ui/hover-link";
import { useRouter } from "next/navigation";
import { useState } from "react";
import type { InboxItem } from "@/app/lib/inbox";
import { sendJson } from "@/app/ui/fetch";
import { InlineMessage } from "@/app/ui/form";

const KIND: Record<InboxItem["kind"], string> = {
  mention: "mention",
  verdict: "verdict",
  reply: "reply",
  run_done: "run finished",
  run_failed: "run failed",
};

export function InboxList({
  items,
  more,
  unread,
  unreadOnly,
}: {
  items: InboxItem[];
  more: boolean;
  unread: number;
  unreadOnly: boolean;
}) {
  const router = useRouter();
  const [error, setError] = useState<string | null>(null);
  async function mark(body: { ids?: string[]; all?: boolean }) {
    setError(null);
    try {
      await sendJson("POST", "/api/inbox/read", body);
      router.refresh();
    } catch (e) {
      setError((e as Error).message);
    }
  }
  return (
    <div className="space-y-3">
      <div className="flex flex-wrap items-center gap-3 text-sm">
        <span data-testid="inbox-unread">{unread.toLocaleString("en-US")} unread</span>
        <HoverLink href={unreadOnly ? "/inbox" : "/inbox?unread=1"} className="text-moss-700 hover:underline">
          {unreadOnly ? "show everything" : "show unread only"}
        </HoverLink>
        <span className="flex-1" />
        {unread ? (
          <button
            type="button"
            onClick={() => void mark({ all: true })}
            className="rounded border border-stone-300 px-3 py-1 hover:bg-stone-100"
          >
            Mark all read
          </button>
        ) : null}
      </div>
      <InlineMessage error={error} />
      {items.length === 0 ? <p className="text-sm text-stone-500">Nothing here.</p> : null}
      <ol aria-label="Inbox items" className="divide-y divide-stone-200 rounded border border-stone-300 bg-white">
        {items.map((n) => (
          <li
            key={n.id}
            data-inbox={n.kind}
            data-read={n.read ? "1" : "0"}
            className={`flex flex-wrap items-baseline gap-3 px-3 py-2 text-sm ${n.read ? "text-stone-500" : ""}`}
          >
            <span className="w-24 text-[11px] uppercase tracking-wider text-stone-500">{KIND[n.kind]}</span>
            <HoverLink
              href={n.href}
              onClick={() => (n.read ? undefined : void sendJson("POST", "/api/inbox/read", { ids: [n.id] }))}
              className={`flex-1 hover:underline ${n.read ? "" : "font-medium text-stone-ink"}`}
            >
              {n.title}
            </HoverLink>
            <span className="text-xs text-stone-500">
              {new Date(n.createdAt).toISOString().slice(0, 16).replace("T", " ")} UTC
            </span>
            {n.read ? null : (
              <button
                type="button"
                onClick={() => void mark({ ids: [n.id] })}
                className="text-xs text-moss-700 hover:underline"
              >
                mark read
              </button>
            )}
          </li>
        ))}
      </ol>
      {more ? (
        <HoverLink
          href={`/inbox?${new URLSearchParams({ ...(unreadOnly ? { unread: "1" } : {}), before: items[items.length - 1].id })}`}
          className="text-sm text-moss-700 hover:underline"
        >
          older ›
        </HoverLink>
      ) : null}
    </div>
  );
}
