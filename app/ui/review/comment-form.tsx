"use client";

/** The reply box of a thread; the verdict has its own panel (verdict-panel.tsx). */
import { useRouter } from "next/navigation";
import { useState } from "react";
import { sendJson } from "@/app/ui/fetch";
import { CommentComposer, type MemberHandle } from "./comment-composer";
import { InlineMessage } from "@/app/ui/form";
import { RunOptions, type RunChoice } from "./run-options";

export function CommentForm({
  threadId,
  runs,
  members = [],
}: {
  threadId: string;
  runs: RunChoice[];
  members?: MemberHandle[];
}) {
  const router = useRouter();
  const [body, setBody] = useState("");
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [note, setNote] = useState<string | null>(null);

  async function send() {
    setBusy(true);
    setError(null);
    setNote(null);
    try {
      const r = await sendJson<{ notified: string[]; mailErrors: string[] }>(
        "POST",
        `/api/threads/${threadId}/comments`,
        { body },
      );
      setBody("");
      if (r.notified.length) setNote(`Notified ${r.notified.map((h) => "@" + h).join(", ")}.`);
      if (r.mailErrors.length) setError(`Comment saved, but e-mail failed: ${r.mailErrors.join("; ")}`);
      router.refresh();
    } catch (e) {
      setError((e as Error).message);
    } finally {
      setBusy(false);
    }
  }

  return (
    <form
      className="space-y-2 rounded border border-stone-300 bg-white p-3"
      onSubmit={(e) => {
        e.preventDefault();
        void send();
      }}
    >
      <CommentComposer
        id="comment"
        label="Reply"
        value={body}
        onChange={setBody}
        target={{ threadId }}
        members={members}
      />
      <div className="flex flex-wrap items-center gap-2">
        {runs.length ? (
          <select
            aria-label="Link a run"
            className="rounded border border-stone-300 px-2 py-1 text-sm"
            value=""
            onChange={(e) => {
              if (e.target.value) setBody((b) => `${b}${b && !b.endsWith(" ") ? " " : ""}[[run ${e.target.value}]]`);
            }}
          >
            <option value="">Link a run…</option>
            <RunOptions runs={runs} />
          </select>
        ) : null}
        <span className="flex-1" />
        <button
          type="submit"
          disabled={busy || body.trim() === ""}
          className="rounded border border-moss-600 px-3 py-1 text-sm text-moss-700 hover:bg-moss-50 disabled:opacity-50"
        >
          Comment
        </button>
      </div>
      <InlineMessage error={error} note={note} />
    </form>
  );
}

/** Opens a thread on a commit (optionally pinned to a run); goes to the new thread's permalink. */
export function NewThreadForm({
  commitId,
  runs,
  members = [],
}: {
  commitId: string;
  runs: RunChoice[];
  /** Members who may be mentioned (handle and name). */
  members?: { handle: string; name: string }[];
}) {
  const router = useRouter();
  const [title, setTitle] = useState("");
  const [body, setBody] = useState("");
  const [runId, setRunId] = useState("");
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  return (
    <form
      className="space-y-2 rounded border border-stone-300 bg-white p-3"
      onSubmit={async (e) => {
        e.preventDefault();
        setBusy(true);
        setError(null);
        try {
          const r = await sendJson<{ url: string }>("POST", "/api/threads", {
            commitId,
            runId: runId || null,
            title,
            body,
          });
          router.push(r.url);
        } catch (err) {
          setError((err as Error).message);
          setBusy(false);
        }
      }}
    >
      <h3 className="text-sm font-medium">Open a thread on this commit</h3>
      <input
        aria-label="Thread title"
        value={title}
        onChange={(e) => setTitle(e.target.value)}
        maxLength={200}
        placeholder="Title"
        className="w-full rounded border border-stone-300 px-2 py-1 text-sm"
      />
      <CommentComposer
        label="First comment"
        value={body}
        onChange={setBody}
        target={{ commitId }}
        members={members}
        rows={3}
      />
      <div className="flex items-center gap-2">
        {runs.length ? (
          <select
            aria-label="Pin to run"
            value={runId}
            onChange={(e) => setRunId(e.target.value)}
            className="rounded border border-stone-300 px-2 py-1 text-sm"
          >
            <option value="">Not pinned to a run</option>
            <RunOptions runs={runs} />
          </select>
        ) : null}
        <span className="flex-1" />
        <button
          type="submit"
          disabled={busy}
          className="rounded bg-moss-600 px-3 py-1 text-sm text-white hover:bg-moss-700 disabled:opacity-50"
        >
          Open thread
        </button>
      </div>
      <InlineMessage error={error} />
    </form>
  );
}
