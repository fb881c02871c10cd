"use client";

/**
 * The networks of a workspace: each with its newest commit and run; create a
 * network, upload a `.runnel` file as a new network, rename, archive; an owner
 * sees the archived ones folded below, with restore. Data from
 * /api/w/[slug]/networks through SWR.
 */
import { useRouter } from "next/navigation";
import { useRef, useState } from "react";
import useSWR, { useSWRConfig } from "swr";
import type { NetworkSummary } from "@/app/lib/networks";
import { getJson, sendJson } from "@/app/ui/fetch";
import { ArchivedNetworks } from "./archived-networks";
import { NetworkItem } from "./network-item";
import { InlineMessage } from "@/app/ui/form";

/** Largest file accepted for upload (the language's own limit is 2 MiB of text). */
const MAX_UPLOAD_BYTES = 2 * 1024 * 1024;

export function NetworkList({
  slug,
  canWrite,
  canManage = false,
}: {
  slug: string;
  canWrite: boolean;
  /** An owner: sees the archived networks and may restore them. */
  canManage?: boolean;
}) {
  const router = useRouter();
  const { mutate: refresh } = useSWRConfig();
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
      <InlineMessage error={problem} />
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
            <NetworkItem
              key={n.id}
              slug={slug}
              network={n}
              canWrite={canWrite}
              onRenamed={() => {
                void mutate();
                void refresh(`/api/w/${slug}/networks?archived=1`);
              }}
            />
          ))}
        </ul>
      )}
      {canManage ? <ArchivedNetworks slug={slug} onRestored={() => void mutate()} /> : null}
    </section>
  );
}
