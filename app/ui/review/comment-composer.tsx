"use client";

/**
 * Where a comment is written: a text box that completes member handles after
 * `@` (name and handle shown, arrows and Enter or Tab to pick), the rules for
 * handles and run references beside it, and a live preview from
 * POST /api/comments/preview: the comment as it will be posted, with its run
 * cards, who it notifies, and a warning for each reference or mention that
 * will stay plain text.
 */
import { useEffect, useId, useRef, useState } from "react";
import useSWR from "swr";
import type { CommentPreview } from "@/app/lib/review/threads";
import { sendJson } from "@/app/ui/fetch";
import { CommentBody } from "./comment-body";

export interface MemberHandle {
  handle: string;
  name: string;
}

export interface CommentComposerProps {
  value: string;
  onChange(v: string): void;
  /** Where the comment goes: a thread, or (for a new thread) its commit. */
  target: { threadId: string } | { commitId: string };
  members: MemberHandle[];
  label: string;
  rows?: number;
  id?: string;
}

/** The `@partial` right before the caret, if the caret ends a mention being typed. */
export function mentionQuery(text: string, caret: number): { start: number; query: string } | null {
  const m = /(^|[^A-Za-z0-9._%+-])@([A-Za-z0-9._-]{0,40})$/.exec(text.slice(0, caret));
  return m ? { start: caret - m[2].length - 1, query: m[2].toLowerCase() } : null;
}

/** Members whose handle starts with, or whose name contains, the query (handle matches first), at most 8. */
export function matchMembers(members: MemberHandle[], query: string): MemberHandle[] {
  const q = query.toLowerCase();
  const byHandle = members.filter((m) => m.handle.startsWith(q));
  const byName = members.filter((m) => !m.handle.startsWith(q) && m.name.toLowerCase().includes(q));
  return [...byHandle, ...byName].slice(0, 8);
}

export function CommentComposer({ value, onChange, target, members, label, rows = 4, id }: CommentComposerProps) {
  const ownId = useId();
  const boxId = id ?? `${ownId}-box`;
  const listId = `${ownId}-members`;
  const box = useRef<HTMLTextAreaElement>(null);
  const [caret, setCaret] = useState(0);
  const [active, setActive] = useState(0);
  const [dismissed, setDismissed] = useState<number | null>(null);
  const [debounced, setDebounced] = useState(value);
  useEffect(() => {
    const t = setTimeout(() => setDebounced(value), 250);
    return () => clearTimeout(t);
  }, [value]);
  const preview = useSWR<CommentPreview>(
    debounced.trim() ? ["/api/comments/preview", JSON.stringify(target), debounced] : null,
    ([url, t, body]: [string, string, string]) => sendJson<CommentPreview>("POST", url, { ...JSON.parse(t), body }),
    { keepPreviousData: true, revalidateOnFocus: false },
  );

  const q = mentionQuery(value, caret);
  const options = q && dismissed !== q.start ? matchMembers(members, q.query) : [];
  const open = options.length > 0;
  const current = Math.min(active, options.length - 1);

  function pick(m: MemberHandle) {
    if (!q) return;
    const next = `${value.slice(0, q.start)}@${m.handle} ${value.slice(caret)}`;
    const at = q.start + m.handle.length + 2;
    onChange(next);
    setCaret(at);
    setActive(0);
    requestAnimationFrame(() => {
      box.current?.focus();
      box.current?.setSelectionRange(at, at);
    });
  }

  return (
    <div className="space-y-2">
      <label htmlFor={boxId} className="block text-sm font-medium">
        {label}
      </label>
      <div className="relative">
        <textarea
          id={boxId}
          ref={box}
          value={value}
          rows={rows}
          maxLength={20000}
          role="combobox"
          aria-expanded={open}
          aria-controls={listId}
          aria-autocomplete="list"
          aria-activedescendant={open ? `${listId}-${current}` : undefined}
          onChange={(e) => {
            onChange(e.target.value);
            setCaret(e.target.selectionStart);
            setActive(0);
          }}
          onSelect={(e) => setCaret(e.currentTarget.selectionStart)}
          onKeyDown={(e) => {
            if (!open) return;
            if (e.key === "ArrowDown") {
              e.preventDefault();
              setActive((current + 1) % options.length);
            } else if (e.key === "ArrowUp") {
              e.preventDefault();
              setActive((current - 1 + options.length) % options.length);
            } else if (e.key === "Enter" || e.key === "Tab") {
              e.preventDefault();
              pick(options[current]);
            } else if (e.key === "Escape") {
              e.preventDefault();
              setDismissed(q!.start);
            }
          }}
          className="w-full rounded border border-stone-300 p-2 font-mono text-sm"
          placeholder="Markdown. Link a run by its id (r_…), as [[run r_…]] or by pasting its address; mention a member with @handle."
        />
        <ul
          id={listId}
          role="listbox"
          aria-label="Members"
          hidden={!open}
          className="absolute left-2 top-full z-10 mt-1 min-w-64 rounded border border-stone-300 bg-white py-1 text-sm shadow"
        >
          {options.map((m, i) => (
            <li
              key={m.handle}
              id={`${listId}-${i}`}
              role="option"
              aria-selected={i === current}
              onMouseDown={(e) => {
                e.preventDefault();
                pick(m);
              }}
              className={`flex cursor-pointer items-baseline justify-between gap-4 px-2 py-0.5 ${i === current ? "bg-moss-50" : ""}`}
            >
              <span>{m.name}</span>
              <span className="font-mono text-xs text-stone-600">@{m.handle}</span>
            </li>
          ))}
        </ul>
      </div>
      <p className="text-xs text-stone-500" data-testid="handle-rule">
        A handle is the part of a member&apos;s e-mail address before the @, in lower case (letters, digits, “.”, “_”,
        “-”): the member at ada.marlow@example.org is @ada.marlow. Type @ to pick from the members. A handle that is no
        member stays plain text and notifies nobody.
      </p>
      {value.trim() ? (
        <div className="rounded border border-dashed border-stone-300 bg-stone-50 p-2" aria-label="Preview">
          <p className="mb-1 text-[11px] uppercase tracking-wider text-stone-500">
            Preview{preview.isValidating ? " (updating…)" : ""}
          </p>
          {preview.error ? (
            <p role="alert" className="text-xs text-ember-500">
              {(preview.error as Error).message}
            </p>
          ) : null}
          {preview.data ? (
            <>
              {preview.data.warnings.length ? (
                <ul role="alert" className="mb-2 space-y-0.5 text-xs text-ochre-700" data-testid="preview-warnings">
                  {preview.data.warnings.map((w) => (
                    <li key={w}>⚠ {w}</li>
                  ))}
                </ul>
              ) : null}
              <CommentBody html={preview.data.html} cards={preview.data.cards} />
              {preview.data.mentions.length ? (
                <p className="mt-1 text-xs text-stone-600">
                  Notifies {preview.data.mentions.map((m) => `${m.name} (@${m.handle})`).join(", ")}.
                </p>
              ) : null}
            </>
          ) : null}
        </div>
      ) : null}
    </div>
  );
}
