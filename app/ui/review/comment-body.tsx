"use client";

/**
 * A rendered comment. The HTML is already sanitised on the server
 * (app/lib/review/markdown.ts); each run placeholder `span.run-ref[data-run]`
 * in it is replaced, after mount, by a card for that run.
 */
import { HoverLink } from "@/app/ui/hover-link";
import { useEffect, useRef, useState } from "react";
import { createPortal } from "react-dom";
import type { RunCard as RunCardData } from "@/app/lib/review/threads";
import { useFormat } from "@/app/ui/notation";
import { ExpectationBadgeView } from "./badges";

export function RunCard({ card }: { card: RunCardData | undefined }) {
  const fmt = useFormat();
  if (!card || !card.found) {
    return (
      <span className="rounded border border-dashed border-stone-300 px-1 text-xs text-stone-500">
        run {card?.id ?? "?"} not found
      </span>
    );
  }
  return (
    <HoverLink
      href={`/runs/${card.id}`}
      data-run-card={card.id}
      aria-label={`Run ${card.id}`}
      className="my-1 inline-flex max-w-full flex-wrap items-baseline gap-x-3 gap-y-1 rounded border border-moss-500 bg-moss-50 px-2 py-1 align-middle text-xs text-stone-ink no-underline hover:border-moss-700"
    >
      <span className="font-mono font-semibold text-moss-700">run {card.id.slice(0, 10)}</span>
      <span data-state={card.state} className="rounded bg-white px-1 font-medium">
        {card.state}
      </span>
      <span className="tabular text-stone-600">
        {card.pointsDone}/{card.pointsTotal} points
      </span>
      <ExpectationBadgeView badge={card.expectations} />
      {card.probes?.map((p) => (
        <span key={p.name} className="tabular font-mono">
          {p.name} = {p.min === p.max ? fmt(p.first, p.unit) : `${fmt(p.min, p.unit)} … ${fmt(p.max, p.unit)}`}
        </span>
      ))}
      {card.commitMessage ? <span className="truncate text-stone-500">on “{card.commitMessage}”</span> : null}
    </HoverLink>
  );
}

export function CommentBody({ html, cards }: { html: string; cards: RunCardData[] }) {
  const host = useRef<HTMLDivElement>(null);
  const [slots, setSlots] = useState<{ el: HTMLElement; id: string }[]>([]);
  useEffect(() => {
    const el = host.current;
    if (!el) return;
    const found = [...el.querySelectorAll<HTMLElement>("span.run-ref[data-run]")].map((s) => {
      s.textContent = "";
      return { el: s, id: s.dataset.run ?? "" };
    });
    setSlots(found);
  }, [html]);
  const byId = new Map(cards.map((c) => [c.id, c]));
  return (
    <>
      <div
        ref={host}
        className="space-y-2 text-sm leading-relaxed [&_a]:text-moss-700 [&_a]:underline [&_blockquote]:border-l-2 [&_blockquote]:border-stone-300 [&_blockquote]:pl-3 [&_code]:font-mono [&_code]:text-[0.92em] [&_ol]:list-decimal [&_ol]:pl-5 [&_pre]:overflow-x-auto [&_pre]:rounded [&_pre]:bg-stone-100 [&_pre]:p-2 [&_table]:text-xs [&_td]:border [&_td]:px-1 [&_th]:border [&_th]:px-1 [&_ul]:list-disc [&_ul]:pl-5 [&_.mention]:font-medium [&_.mention]:text-moss-700"
        dangerouslySetInnerHTML={{ __html: html }}
      />
      {slots.map((s, i) =>
        createPortal(<RunCard card={byId.get(s.id) ?? { id: s.id, found: false }} />, s.el, `${s.id}-${i}`),
      )}
    </>
  );
}
