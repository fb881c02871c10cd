"use client";

/**
 * The networks of a workspace: each with its newest commit and run; create a
 * network, upload a `.runnel` file as a new network, rename. Data from
 * /api/w/[slug]/networks through SWR.
 */
import Link from "next/link";
import { useRouter } from "next/navigation";
import { useRef, useState } from "react";
import useSWR from "swr";
import type { NetworkSummary } from "@/app/lib/networks";
import { getJson, sendJson } from "./fetch";
import { RunStateBadge } from "./run-state";

/** Largest file accepted for upload (the language's own limit is 2 MiB of text). */
const MAX_UPLOAD_BYTES = 2 * 1024 * 1024;

function ago(ms: number): string {
  const s = Math.max(0, Math.round((Date.now() - ms) / 1000));
  if (s < 60) return "just now";
  if (s < 3600) return `${Math.floor(s / 60)} min ago`;
  if (s < 86400) return `${Math.floor(s / 3600)} h ago`;
  return new Date(ms).toLocaleDateString("en-GB");
}

export function NetworkList({ slug, canWrite }: { slug: string; canWrite: boolean }) {
  const router = useRouter();
  const { data, error, mutate } = useSWR<{ networks: NetworkSummary[] }>(`/api/w/${slug}/networks`, getJson);
  const [name, setName] = useState("");
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const file = useRef<HTMLInputElement>(null);

  const create = async (input: { name: string; text?: string; message?: string }) => {
    setBusy(true);
    setProblem(null);
    try {
      const r = await sendJson<{ network: { slug: string } }>("POST", `/api/w/${slug}/networks`, input);
      await mutate();
      router.push(`/w/${slug}/n/${r.network.slug}`);
    } catch (e) {
      setProblem((e as Error).message);
    } finally {
      setBusy(false);
    }
  };

  const upload = async (f: File) => {
    if (f.size > MAX_UPLOAD_BYTES) {
      setProblem(`${f.name} is ${(f.size / 1024 / 1024).toFixed(1)} MB; the limit is 2 MB`);
      return;
    }
    const text = await f.text();
    await create({ name: f.name.replace(/\.runnel$/i, ""), text, message: `Upload ${f.name}` });
  };

  return (
    <section aria-labelledby="networks-heading" className="space-y-4">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <h2 id="networks-heading" className="text-lg font-semibold">
          Networks
        </h2>
        {canWrite ? (
          <form
            className="flex flex-wrap items-center gap-2"
            onSubmit={(e) => {
              e.preventDefault();
              if (name.trim()) void create({ name });
            }}
          >
            <input
              value={name}
              onChange={(e) => setName(e.target.value)}
              placeholder="New network name"
              aria-label="New network name"
              className="w-56 rounded border border-stone-300 bg-white px-2 py-1 text-sm"
            />
            <button
              type="submit"
              disabled={busy || !name.trim()}
              className="rounded bg-moss-600 px-3 py-1 text-sm text-white hover:bg-moss-700 disabled:opacity-50"
            >
              Create
            </button>
            <button
              type="button"
              disabled={busy}
              onClick={() => file.current?.click()}
              className="rounded border border-moss-600 px-3 py-1 text-sm text-moss-700 hover:bg-moss-50 disabled:opacity-50"
            >
              Upload .runnel file…
            </button>
            <input
              ref={file}
              type="file"
              accept=".runnel,text/plain"
              className="hidden"
              aria-label="Upload a .runnel file"
              onChange={(e) => {
                const f = e.target.files?.[0];
                e.target.value = "";
                if (f) void upload(f);
              }}
            />
          </form>
        ) : null}
      </div>
      {problem ? (
        <p role="alert" className="text-sm text-ember-500">
          {problem}
        </p>
      ) : null}
      {error ? <p className="text-sm text-ember-500">Could not load the networks: {(error as Error).message}</p> : null}
      {!data ? (
        !error ? (
          <p className="text-sm text-stone-500">Loading…</p>
        ) : null
      ) : data.networks.length === 0 ? (
        <p className="rounded border border-dashed border-stone-300 bg-white p-6 text-stone-600">
          No networks yet.{canWrite ? " Create one or upload a .runnel file." : ""}
        </p>
      ) : (
        <ul aria-label="Networks" className="divide-y divide-stone-200 rounded border border-stone-200 bg-white">
          {data.networks.map((n) => (
            <NetworkItem key={n.id} slug={slug} network={n} canWrite={canWrite} onRenamed={() => void mutate()} />
          ))}
        </ul>
      )}
    </section>
  );
}

function NetworkItem({
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
            <Link href={`/w/${slug}/n/${n.slug}`} className="font-medium text-moss-700 hover:underline">
              {n.name}
            </Link>
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
      <div className="w-28 text-right">
        {n.lastRun ? (
          <Link
            href={`/runs/${n.lastRun.id}`}
            className="inline-flex items-center gap-1 text-xs text-stone-600 hover:text-moss-700"
            aria-label={`Newest run of ${n.name}: ${n.lastRun.state}`}
          >
            run <RunStateBadge state={n.lastRun.state} />
          </Link>
        ) : (
          <span className="text-xs text-stone-400">no runs</span>
        )}
      </div>
    </li>
  );
}
