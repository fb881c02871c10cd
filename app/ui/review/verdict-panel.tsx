"use client";

/**
 * A reviewer's verdict on a commit: the current state in words, and the
 * actions that fit it — sign off (after a confirmation that lists what is
 * approved), send back for rework, or withdraw the verdict given. The
 * confirmation lists the commit, its newest run of each analysis with state
 * and validity warnings, and each run's design checks when there are any
 * (`SignOffRun.checks`); a reason is asked for, and required when the
 * summary says so (`reasonRequired`).
 */
import { useRouter } from "next/navigation";
import { useRef, useState } from "react";
import type { SignOffSummary } from "@/app/lib/review/sign-off";
import { sendJson } from "@/app/ui/fetch";

type Entry = "signed_off" | "rework" | "withdrawn";

export interface VerdictPanelProps {
  threadId: string;
  /** Commits a verdict may be about (the thread's and later ones of the network), newest first. */
  commits: { id: string; label: string }[];
  defaultCommitId: string;
  summaries: Record<string, SignOffSummary>;
  /** The reviewer's own current verdict on each commit (null: none). */
  mine: Record<string, "signed_off" | "rework" | null>;
}

const STATE_WORDS = {
  signed_off: "You signed this commit off.",
  rework: "You sent this commit back for rework.",
  none: "You have given no verdict on this commit.",
};

export function VerdictPanel({ threadId, commits, defaultCommitId, summaries, mine }: VerdictPanelProps) {
  const router = useRouter();
  const dialog = useRef<HTMLDialogElement>(null);
  const [commitId, setCommitId] = useState(defaultCommitId);
  const [reason, setReason] = useState("");
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const current = mine[commitId] ?? null;
  const summary = summaries[commitId];

  async function send(verdict: Entry, body: string) {
    setBusy(true);
    setError(null);
    try {
      await sendJson("POST", `/api/threads/${threadId}/comments`, { body, verdict, commitId });
      dialog.current?.close();
      setReason("");
      router.refresh();
    } catch (e) {
      setError((e as Error).message);
    } finally {
      setBusy(false);
    }
  }

  const runsWithWarnings = summary?.runs.filter((r) => r.warnings.length > 0).length ?? 0;
  const reasonMissing =
    !!summary?.reasonRequired && reason.replace(/\s+/g, " ").trim().length < summary.reasonMinLength;
  return (
    <section aria-label="Your verdict" className="space-y-2 rounded border border-stone-300 bg-white p-3 text-sm">
      <div className="flex flex-wrap items-center gap-2">
        <span className="font-medium">Your verdict</span>
        {commits.length > 1 ? (
          <select
            aria-label="Verdict about commit"
            value={commitId}
            onChange={(e) => setCommitId(e.target.value)}
            className="rounded border border-stone-300 px-2 py-1 font-mono text-xs"
          >
            {commits.map((c) => (
              <option key={c.id} value={c.id}>
                {c.label}
              </option>
            ))}
          </select>
        ) : null}
        <span data-testid="my-verdict" data-state={current ?? "none"} className="text-stone-600">
          {STATE_WORDS[current ?? "none"]}
        </span>
      </div>
      <div className="flex flex-wrap gap-2">
        <button
          type="button"
          disabled={busy || current === "signed_off"}
          onClick={() => dialog.current?.showModal()}
          aria-pressed={current === "signed_off"}
          className="rounded bg-moss-600 px-3 py-1 text-white hover:bg-moss-700 disabled:bg-moss-100 disabled:text-moss-700"
        >
          {current === "signed_off" ? "✓ Signed off" : current === "rework" ? "Sign off instead…" : "Sign off…"}
        </button>
        <button
          type="button"
          disabled={busy || current === "rework"}
          onClick={() => void send("rework", reason)}
          aria-pressed={current === "rework"}
          className="rounded border border-ochre-500 px-3 py-1 text-ochre-700 hover:bg-ochre-50 disabled:bg-ochre-50 disabled:opacity-80"
        >
          {current === "rework" ? "↺ Sent back for rework" : "Send back for rework"}
        </button>
        {current ? (
          <button
            type="button"
            disabled={busy}
            onClick={() => void send("withdrawn", "")}
            className="rounded border border-stone-300 px-3 py-1 text-stone-700 hover:bg-stone-100"
          >
            Withdraw my verdict
          </button>
        ) : null}
      </div>
      {error ? (
        <p role="alert" className="text-ember-500">
          {error}
        </p>
      ) : null}

      <dialog
        ref={dialog}
        aria-labelledby="signoff-title"
        className="w-[min(44rem,95vw)] rounded border border-stone-300 p-0 backdrop:bg-stone-900/40"
      >
        <form
          method="dialog"
          className="space-y-3 p-4 text-sm"
          onSubmit={(e) => {
            e.preventDefault();
            void send("signed_off", reason);
          }}
        >
          <h2 id="signoff-title" className="text-lg font-semibold">
            Sign off this commit?
          </h2>
          {summary ? (
            <>
              <p>
                <span className="font-mono">{summary.commit.id.slice(0, 10)}</span> “{summary.commit.message}” by{" "}
                {summary.commit.authorName}
              </p>
              <div>
                <p className="font-medium">Its newest runs</p>
                {summary.runs.length === 0 ? (
                  <p className="text-ochre-700">This commit has no run: you would sign off untested text.</p>
                ) : (
                  <ul className="space-y-1" aria-label="Runs being signed off">
                    {summary.runs.map((r) => (
                      <li key={r.id} data-signoff-run={r.id} className="rounded border border-stone-200 px-2 py-1">
                        <span className="font-mono text-xs">{r.id.slice(0, 10)}</span> {r.analysis} ·{" "}
                        <span className={r.state === "done" ? "text-moss-700" : "text-ember-500"}>{r.state}</span> ·{" "}
                        {r.pointsDone.toLocaleString("en-US")}/{r.pointsTotal.toLocaleString("en-US")} points
                        {r.warnings.length ? (
                          <ul className="ml-4 list-disc text-xs text-ochre-700" aria-label="Validity warnings">
                            {r.warnings.map((w, i) => (
                              <li key={i}>
                                {w.message} ({w.points.toLocaleString("en-US")} points)
                              </li>
                            ))}
                          </ul>
                        ) : (
                          <span className="text-xs text-stone-500"> · no validity warnings</span>
                        )}
                        {r.checks.length ? (
                          <ul className="ml-4 text-xs" aria-label="Design checks">
                            {r.checks.map((c) => (
                              <li key={c.name} data-check={c.status}>
                                {c.status === "met" ? "✓" : c.status === "failed" ? "✗" : "–"} {c.name}
                                {c.detail ? `: ${c.detail}` : ""}
                              </li>
                            ))}
                          </ul>
                        ) : null}
                      </li>
                    ))}
                  </ul>
                )}
              </div>
              {summary.expectations ? (
                <p
                  data-testid="signoff-expectations"
                  className={summary.failing.length ? "font-medium text-ember-500" : "text-moss-700"}
                >
                  Expectations: {summary.expectations}
                </p>
              ) : null}
              {runsWithWarnings ? (
                <p className="text-ochre-700">
                  {runsWithWarnings} of these runs carry validity warnings: the model may not hold there.
                </p>
              ) : null}
            </>
          ) : null}
          <label className="block">
            <span className="font-medium">
              Note with the sign-off{summary?.reasonRequired ? " (required)" : " (optional)"}
            </span>
            {summary?.reasonPrompt ? (
              <span className="block text-xs text-stone-600">{summary.reasonPrompt}</span>
            ) : null}
            <textarea
              value={reason}
              onChange={(e) => setReason(e.target.value)}
              rows={3}
              required={summary?.reasonRequired}
              className="mt-1 w-full rounded border border-stone-300 p-2 font-mono text-sm"
            />
          </label>
          <p className="text-xs text-stone-500">
            Results are model estimates: silicon must be verified by measurement, and a foundry&apos;s models and design
            rules take precedence.
          </p>
          <div className="flex justify-end gap-2">
            <button
              type="button"
              onClick={() => dialog.current?.close()}
              className="rounded border border-stone-300 px-3 py-1 hover:bg-stone-100"
            >
              Not yet
            </button>
            <button
              type="submit"
              disabled={busy || reasonMissing}
              className="rounded bg-moss-600 px-3 py-1 text-white hover:bg-moss-700 disabled:opacity-50"
            >
              Sign off {summary ? summary.commit.id.slice(0, 10) : ""}
            </button>
          </div>
        </form>
      </dialog>
    </section>
  );
}
