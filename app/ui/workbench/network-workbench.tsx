"use client";

/**
 * The network page's live part: the editor with live diagnostics, commit
 * (Ctrl/⌘+S) and run (Ctrl/⌘+Enter), the history beside it and the runs of the
 * selected commit with their progress. Leaving with uncommitted edits asks
 * first. Data from /api/networks/…, /api/commits/…, /api/runs… through SWR.
 */
import { HoverLink } from "@/app/ui/hover-link";
import { useCallback, useEffect, useRef, useState } from "react";
import useSWR from "swr";
import type { CommitRow, CommitSummary, NetworkRow } from "@/app/lib/networks";
import type { RunRow } from "@/app/lib/runs";
import { NetworkEditor } from "@/app/ui/network-editor";
import { getJson, sendJson } from "@/app/ui/fetch";
import type { Diagnostic } from "@/src/lang/network";
import { StructurePanel } from "@/app/ui/structure/structure-panel";
import { HistoryPanel } from "./history-panel";
import { RunsPanel } from "./runs-panel";
import { isLive } from "@/db/run-states";

export interface NetworkWorkbenchProps {
  workspaceSlug: string;
  /** The network as the page found it (identity; its history and texts come through the API). */
  network: NetworkRow;
  /** The commit shown first (?commit=…, else the head); null for a network without commits. */
  initialCommitId: string | null;
  canWrite: boolean;
  canRun: boolean;
}

function starterText(name: string): string {
  return `network ${name.replace(/[^A-Za-z0-9_]/g, "_").replace(/^[^A-Za-z_]/, "n_$&")}\n\nrail vdd = 1.8\nrail gnd = 0\n`;
}

export function NetworkWorkbench({ workspaceSlug, network, initialCommitId, canWrite, canRun }: NetworkWorkbenchProps) {
  const history = useSWR<{ commits: CommitSummary[]; network: NetworkRow }>(
    `/api/networks/${network.id}/commits`,
    getJson,
  );
  const commits = history.data?.commits ?? [];
  const headId = history.data ? history.data.network.headCommitId : network.headCommitId;
  const [selectedId, setSelectedId] = useState<string | null>(initialCommitId);
  // Commits never change: fetched once each.
  const selected = useSWR<{ commit: CommitRow }>(selectedId ? `/api/commits/${selectedId}` : null, getJson, {
    revalidateOnFocus: false,
  });
  const head = useSWR<{ commit: CommitRow }>(headId ? `/api/commits/${headId}` : null, getJson, {
    revalidateOnFocus: false,
  });
  const headText = headId ? head.data?.commit.text : starterText(network.name);
  const viewingHead = selectedId === headId;

  /** The editor's text while editing on the head; what a commit sends. */
  const [draft, setDraft] = useState<string | null>(null);
  /** What the editor is told to show (changes only when another commit is opened). */
  const [shown, setShown] = useState<string>(headId ? "" : starterText(network.name));
  const baseText = headText ?? "";
  const dirty = draft !== null && draft !== baseText;
  const [diagnostics, setDiagnostics] = useState<Diagnostic[]>([]);
  const [message, setMessage] = useState("");
  const [notice, setNotice] = useState<{ kind: "ok" | "problem"; text: string } | null>(null);
  const [busy, setBusy] = useState(false);
  /** The editor, or the structure of the selected commit. */
  const [view, setView] = useState<"text" | "structure">("text");
  const messageInput = useRef<HTMLInputElement>(null);

  // Show the selected commit's text when it arrives (a read-only view unless it is the head).
  const selectedText = selected.data?.commit.text;
  useEffect(() => {
    if (selectedText === undefined) return;
    if (viewingHead && draft !== null) return;
    setShown(selectedText);
  }, [selectedText, viewingHead, draft]);

  // Ask before leaving with uncommitted edits: closing or reloading the tab, and links inside the app.
  useEffect(() => {
    if (!dirty) return;
    const beforeUnload = (e: BeforeUnloadEvent) => {
      e.preventDefault();
      e.returnValue = "";
    };
    const click = (e: MouseEvent) => {
      const a = (e.target as HTMLElement | null)?.closest?.("a[href]") as HTMLAnchorElement | null;
      if (!a || a.target === "_blank" || a.hasAttribute("download") || a.getAttribute("href")?.startsWith("#")) return;
      if (!window.confirm("This network has uncommitted edits. Leave and lose them?")) {
        e.preventDefault();
        e.stopPropagation();
      }
    };
    window.addEventListener("beforeunload", beforeUnload);
    document.addEventListener("click", click, true);
    return () => {
      window.removeEventListener("beforeunload", beforeUnload);
      document.removeEventListener("click", click, true);
    };
  }, [dirty]);

  const errors = diagnostics.filter((d) => d.severity === "error").length;
  const warnings = diagnostics.length - errors;

  const commit = useCallback(async () => {
    if (!canWrite) return;
    if (!viewingHead) {
      setNotice({
        kind: "problem",
        text: "You are viewing an older commit: open the newest one (or restore this text) to edit and commit.",
      });
      return;
    }
    if (!dirty || draft === null) {
      setNotice({ kind: "problem", text: "Nothing to commit: the text is the same as the newest commit." });
      return;
    }
    if (!message.trim()) {
      setNotice({ kind: "problem", text: "Write a commit message (what changed), then press Enter or Ctrl+S again." });
      messageInput.current?.focus();
      return;
    }
    setBusy(true);
    try {
      const r = await sendJson<{ commit: CommitRow }>("POST", `/api/networks/${network.id}/commits`, {
        parent: headId ?? null,
        text: draft,
        message,
      });
      await history.mutate();
      setSelectedId(r.commit.id);
      setDraft(null);
      setShown(r.commit.text);
      setMessage("");
      setNotice({
        kind: r.commit.ok ? "ok" : "problem",
        text: r.commit.ok
          ? `Committed ${r.commit.id.slice(0, 8)}.`
          : `Committed ${r.commit.id.slice(0, 8)} with ${r.commit.errorCount} error(s): it can be kept but not run.`,
      });
    } catch (e) {
      setNotice({ kind: "problem", text: (e as Error).message });
    } finally {
      setBusy(false);
    }
  }, [canWrite, viewingHead, dirty, draft, message, network.id, headId, history]);

  /** The selected commit once its own text has arrived (never the previous selection's, just after a commit). */
  const selectedCommit = selected.data?.commit.id === selectedId ? selected.data.commit : null;
  const runBlocked: string | null = !canRun
    ? "your role cannot start runs"
    : !selectedCommit
      ? selectedId
        ? "the commit is still loading"
        : "commit the network first"
      : viewingHead && dirty
        ? "commit your edits first (Ctrl+S): runs are of commits"
        : !selectedCommit.ok
          ? `commit ${selectedCommit.id.slice(0, 8)} has ${selectedCommit.errorCount} error(s): fix and commit before running`
          : null;

  const runs = useSWR<{ runs: RunRow[] }>(selectedId ? `/api/runs?commit=${selectedId}` : null, getJson, {
    refreshInterval: (d) => (d?.runs.some((r) => isLive(r.state)) ? 1000 : 0),
  });

  const run = useCallback(async () => {
    if (runBlocked || !selectedCommit) {
      if (runBlocked) setNotice({ kind: "problem", text: `Cannot run: ${runBlocked}.` });
      return;
    }
    setBusy(true);
    try {
      await sendJson<{ run: RunRow }>("POST", "/api/runs", { commit: selectedCommit.id });
      await runs.mutate();
      setNotice({ kind: "ok", text: `Run of ${selectedCommit.id.slice(0, 8)} queued.` });
    } catch (e) {
      setNotice({ kind: "problem", text: `Cannot run: ${(e as Error).message}` });
    } finally {
      setBusy(false);
    }
  }, [runBlocked, selectedCommit, runs]);

  const open = (id: string) => {
    setSelectedId(id);
    setNotice(null);
    if (id === headId && draft !== null) setShown(draft);
  };

  const restore = () => {
    if (!selectedCommit || !headId) return;
    const text = selectedCommit.text;
    setSelectedId(headId);
    setDraft(text);
    setShown(text);
    setMessage(`Restore ${selectedCommit.id.slice(0, 8)}`);
  };

  /** Until the head's text has arrived there is nothing to edit. */
  const loading = headId !== null && headText === undefined;
  const readOnly = !canWrite || !viewingHead || loading;
  // Only the keys this member can use: a viewer has none.
  const keyHints = [
    canWrite ? "Ctrl+S commit" : null,
    canRun ? "Ctrl+Enter run" : null,
    canWrite ? "Ctrl+Space complete" : null,
  ]
    .filter(Boolean)
    .join(" · ");
  const onChange = useCallback(
    (text: string) => {
      if (!readOnly) setDraft(text);
    },
    [readOnly],
  );

  return (
    <div className="grid grid-cols-1 gap-6 lg:grid-cols-[minmax(0,2fr)_minmax(18rem,1fr)]">
      <div className="min-w-0 space-y-3">
        <div className="flex flex-wrap items-center gap-2">
          {canWrite ? (
            <form
              className="flex min-w-0 flex-1 items-center gap-2"
              onSubmit={(e) => {
                e.preventDefault();
                void commit();
              }}
            >
              <input
                ref={messageInput}
                value={message}
                onChange={(e) => setMessage(e.target.value)}
                placeholder="Commit message: what changed"
                aria-label="Commit message"
                disabled={!viewingHead}
                className="w-0 min-w-0 flex-1 rounded border border-stone-300 bg-white px-2 py-1 text-sm disabled:bg-stone-100"
              />
              <button
                type="submit"
                disabled={busy || !viewingHead || !dirty}
                title="Ctrl+S / ⌘S"
                className="rounded bg-moss-600 px-3 py-1 text-sm text-white hover:bg-moss-700 disabled:opacity-50"
              >
                Commit
              </button>
            </form>
          ) : (
            <span className="flex-1 text-sm text-stone-500">
              Read only: your role can read, download and compare{canRun ? " and start runs" : ""}.
            </span>
          )}
          {canRun ? (
            <button
              type="button"
              onClick={() => void run()}
              disabled={busy || runBlocked !== null}
              title={
                runBlocked ? `Cannot run: ${runBlocked}` : "Run every analysis of this commit (Ctrl+Enter / ⌘Enter)"
              }
              className="rounded border border-moss-600 px-3 py-1 text-sm text-moss-700 hover:bg-moss-50 disabled:cursor-not-allowed disabled:opacity-50"
            >
              Run
            </button>
          ) : null}
          {selectedId ? (
            <a
              href={`/api/commits/${selectedId}?download`}
              download
              className="text-sm text-stone-600 hover:text-moss-700"
            >
              Download
            </a>
          ) : null}
        </div>
        {canRun && runBlocked && selectedCommit ? (
          <p className="text-xs text-stone-500" data-slot="run-blocked">
            Run: {runBlocked}.
          </p>
        ) : null}
        {!viewingHead && selectedCommit ? (
          <div className="flex flex-wrap items-center gap-3 rounded border border-stone-300 bg-stone-100 px-3 py-2 text-sm">
            <span>
              Viewing older commit <span className="font-mono">{selectedCommit.id.slice(0, 8)}</span> (read only).
            </span>
            {headId ? (
              <button type="button" className="text-moss-700 hover:underline" onClick={() => open(headId)}>
                Back to the newest
              </button>
            ) : null}
            {canWrite ? (
              <button type="button" className="text-moss-700 hover:underline" onClick={restore}>
                Restore this text as a new edit
              </button>
            ) : null}
          </div>
        ) : null}
        {loading || (selectedId !== null && !selected.data && !selected.error) ? (
          <p className="text-xs text-stone-500">Loading the text…</p>
        ) : null}
        {selected.error ? (
          <p className="text-sm text-ember-500">Could not load the commit: {(selected.error as Error).message}</p>
        ) : null}
        <div role="tablist" aria-label="Network views" className="flex gap-1 border-b border-stone-300 text-sm">
          {(["text", "structure"] as const).map((v) => (
            <button
              key={v}
              type="button"
              role="tab"
              aria-selected={view === v}
              onClick={() => setView(v)}
              disabled={v === "structure" && !selectedId}
              className={`-mb-px rounded-t border px-3 py-1 ${view === v ? "border-stone-300 border-b-white bg-white font-medium text-moss-700" : "border-transparent text-stone-600 hover:text-moss-700 disabled:opacity-50"}`}
            >
              {v === "text" ? "Text" : "Structure"}
            </button>
          ))}
        </div>
        {view === "structure" && selectedId ? <StructurePanel commitId={selectedId} title={network.name} /> : null}
        {/* The editor stays mounted (its undo history and cursor) while the structure is shown. */}
        <div className={view === "text" ? "space-y-3" : "hidden"}>
          <NetworkEditor
            value={shown}
            onChange={onChange}
            onSave={canWrite ? () => void commit() : undefined}
            onRun={canRun ? () => void run() : undefined}
            readOnly={readOnly}
            onDiagnostics={setDiagnostics}
            className="h-[60vh] min-h-80 overflow-hidden rounded border border-stone-300 bg-white"
          />
          <div className="flex flex-wrap items-center gap-4 text-xs" aria-live="polite">
            <span
              data-slot="diagnostic-count"
              className={errors ? "text-ember-500" : warnings ? "text-amber-700" : "text-moss-700"}
            >
              {errors || warnings
                ? `${errors} error${errors === 1 ? "" : "s"}, ${warnings} warning${warnings === 1 ? "" : "s"}`
                : "no problems"}
            </span>
            {dirty ? (
              <span className="text-amber-700" data-slot="dirty">
                uncommitted edits
              </span>
            ) : null}
            {keyHints ? <span className="text-stone-500">{keyHints}</span> : null}
          </div>
          {diagnostics.length ? (
            <ul aria-label="Diagnostics" className="max-h-40 space-y-0.5 overflow-auto text-xs">
              {diagnostics.slice(0, 50).map((d, i) => (
                <li key={i} className={d.severity === "error" ? "text-ember-500" : "text-amber-700"}>
                  line {d.line}:{d.column} {d.severity}: {d.message}
                </li>
              ))}
            </ul>
          ) : null}
        </div>
        {notice ? (
          <p
            role={notice.kind === "problem" ? "alert" : "status"}
            className={`text-sm ${notice.kind === "problem" ? "text-ember-500" : "text-moss-700"}`}
          >
            {notice.text}
          </p>
        ) : null}
      </div>
      <aside className="min-w-0 space-y-6">
        <HistoryPanel
          commits={commits}
          headId={headId}
          selectedId={selectedId}
          onOpen={open}
          reviewHref={(id) => `/w/${workspaceSlug}/n/${network.slug}/compare?to=${id}&thread=new#review`}
        />
        <RunsPanel runs={runs.data?.runs} commitId={selectedId} onCanceled={() => void runs.mutate()} canRun={canRun} />
        {commits.length > 1 ? (
          <HoverLink
            href={`/w/${workspaceSlug}/n/${network.slug}/compare`}
            className="block text-sm text-moss-700 hover:underline"
          >
            Compare commits →
          </HoverLink>
        ) : null}
      </aside>
    </div>
  );
}
