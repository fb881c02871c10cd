"use client";

import { HoverLink } from "@/app/ui/hover-link";
import { useState } from "react";
import type { NetworkSummary } from "@/app/lib/networks";
import { sendJson } from "@/app/ui/fetch";
import { RunStateBadge } from "@/app/ui/run/run-state-badge";
import { HeadReview } from "./head-review";
import { RunValidity } from "./run-validity";

/** One network in the workspace list: rename, archive, head commit, diagnostics and newest run. */

function ago(ms: number): string {
  const s = Math.max(0, Math.round((Date.now() - ms) / 1000));
  if (s < 60) return "just now";
  if (s < 3600) return `${Math.floor(s / 60)} min ago`;
  if (s < 86400) return `${Math.floor(s / 3600)} h ago`;
  return new Date(ms).toLocaleDateString("en-GB");
}

export function NetworkItem({
  slug,
  network: n,
  canWrite,
  onRenamed,
}: {
  slug: string;
  network: NetworkSummary;
  canWrite: boolean;
  onRenamed(): void;
}) {
  const [editing, setEditing] = useState(false);
  const [name, setName] = useState(n.name);
  const [problem, setProblem] = useState<string | null>(null);
  const rename = async () => {
    try {
      await sendJson("PATCH", `/api/networks/${n.id}`, { name });
      setEditing(false);
      setProblem(null);
      onRenamed();
    } catch (e) {
      setProblem((e as Error).message);
    }
  };
  const archive = async () => {
    if (!window.confirm(`Archive ${n.name}? It leaves this list; its commits, runs and threads are kept.`)) return;
    try {
      await sendJson("PATCH", `/api/networks/${n.id}`, { archived: true });
      setProblem(null);
      onRenamed();
    } catch (e) {
      setProblem((e as Error).message);
    }
  };
  return (
    <li className="flex flex-wrap items-center gap-x-6 gap-y-1 px-4 py-3">
      <div className="min-w-56 flex-1">
        {editing ? (
          <form
            className="flex items-center gap-2"
            onSubmit={(e) => {
              e.preventDefault();
              void rename();
            }}
          >
            <input
              value={name}
              onChange={(e) => setName(e.target.value)}
              aria-label={`New name for ${n.name}`}
              className="rounded border border-stone-300 px-2 py-0.5 text-sm"
              autoFocus
            />
            <button type="submit" className="text-sm text-moss-700 hover:underline">
              Save
            </button>
            <button type="button" className="text-sm text-stone-500 hover:underline" onClick={() => setEditing(false)}>
              Cancel
            </button>
          </form>
        ) : (
          <div className="flex items-baseline gap-3">
            <HoverLink href={`/w/${slug}/n/${n.slug}`} className="font-medium text-moss-700 hover:underline">
              {n.name}
            </HoverLink>
            {n.headCommitId ? <HeadReview commitId={n.headCommitId} /> : null}
            {canWrite ? (
              <button
                type="button"
                onClick={() => setEditing(true)}
                className="text-xs text-stone-500 hover:text-moss-700"
                aria-label={`Rename ${n.name}`}
              >
                rename
              </button>
            ) : null}
            {canWrite ? (
              <button
                type="button"
                onClick={() => void archive()}
                className="text-xs text-stone-500 hover:text-moss-700"
                aria-label={`Archive ${n.name}`}
              >
                archive
              </button>
            ) : null}
          </div>
        )}
        {problem ? <p className="text-xs text-ember-500">{problem}</p> : null}
        <p className="text-xs text-stone-500">
          {n.head ? (
            <>
              <span className="font-mono">{n.head.id.slice(0, 8)}</span> “{n.head.message}” · {n.head.authorName} ·{" "}
              {ago(n.head.createdAt)} · {n.commitCount} commit{n.commitCount === 1 ? "" : "s"}
            </>
          ) : (
            "no commits yet"
          )}
        </p>
      </div>
      <div className="text-xs">
        {n.head ? (
          n.head.ok ? (
            <span className="text-moss-700">
              {n.head.warningCount ? `${n.head.warningCount} warning(s)` : "no errors"}
            </span>
          ) : (
            <span className="text-ember-500">{n.head.errorCount} error(s)</span>
          )
        ) : null}
      </div>
      <div className="w-full text-xs sm:w-auto sm:min-w-40 sm:text-right">
        {n.lastRun ? (
          <HoverLink
            href={`/runs/${n.lastRun.id}`}
            className="inline-flex flex-wrap items-center gap-1 text-stone-600 hover:text-moss-700 sm:justify-end"
            aria-label={`Newest run of ${n.name}: ${n.lastRun.state}`}
          >
            run <RunStateBadge state={n.lastRun.state} />
            <RunValidity run={n.lastRun} />
          </HoverLink>
        ) : (
          <span className="text-stone-400">no runs</span>
        )}
      </div>
    </li>
  );
}
