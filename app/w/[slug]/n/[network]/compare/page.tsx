import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { formatEng } from "@/app/lib/format";
import { RequestError } from "@/app/lib/http";
import { getCommit, listCommits, networkBySlug } from "@/app/lib/networks";
import { workspacePage } from "@/app/lib/pages";
import { commitBadges, compareCommits, type Comparison } from "@/app/lib/review/diffs";
import { DEFAULT_TOLERANCE, type DiffRow } from "@/app/lib/review/results-diff";
import { runsOfCommit } from "@/app/lib/review/run-tables";
import { listThreads } from "@/app/lib/review/threads";
import { CommitReviewBadges } from "@/app/ui/review/badges";
import { NewThreadForm } from "@/app/ui/review/comment-form";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Compare commits" };

type Props = {
  params: Promise<{ slug: string; network: string }>;
  searchParams: Promise<Record<string, string | undefined>>;
};

const UNIT: Record<string, string> = { voltage: "V", current: "A", ic: "", value: "" };
const num = (s: string | undefined) =>
  s !== undefined && s.trim() !== "" && Number.isFinite(Number(s)) && Number(s) >= 0 ? Number(s) : undefined;

function fmt(v: number, quantity: string) {
  return Number.isFinite(v) ? formatEng(v, UNIT[quantity] ?? "", 4) : String(v);
}
function fmtRel(r: number) {
  if (!Number.isFinite(r)) return Number.isNaN(r) ? "—" : r > 0 ? "+∞" : "−∞";
  return `${r >= 0 ? "+" : ""}${(r * 100).toPrecision(3)} %`;
}

/** /w/[slug]/n/[network]/compare?from=C1&to=C2: text and results diff of two commits, the history with review badges. */
export default async function ComparePage({ params, searchParams }: Props) {
  const { slug, network: netSlug } = await params;
  const q = await searchParams;
  const path = `/w/${slug}/n/${netSlug}/compare`;
  const { workspace, can } = await workspacePage(slug, path);
  const net = networkBySlug(workspace.id, netSlug);
  if (!net) notFound();
  const history = listCommits(net.id);
  const badges = commitBadges(history.map((c) => c.id));
  const to = q.to ? getCommit(q.to) : history[0] ? getCommit(history[0].id) : null;
  const fromId = q.from ?? to?.parentId ?? null;
  const from = fromId ? getCommit(fromId) : null;
  if ((q.to && to?.networkId !== net.id) || (q.from && from?.networkId !== net.id)) notFound();
  const tolerance = {
    rel: num(q.rel),
    absCurrent: num(q.absCurrent),
    absVoltage: num(q.absVoltage),
    absProbe: num(q.absProbe),
  };
  const tol = Object.fromEntries(Object.entries(tolerance).filter(([, v]) => v !== undefined));
  const all = q.all === "1";
  const view = q.view === "unified" ? "unified" : "side";
  let cmp: Comparison | null = null;
  let problem: string | null = null;
  if (from && to) {
    try {
      cmp = compareCommits(from.id, to.id, { tolerance: tol, includeWithin: all, limit: 2000 });
    } catch (e) {
      if (e instanceof RequestError) problem = e.message;
      else throw e;
    }
  }
  const netPath = `/w/${workspace.slug}/n/${net.slug}`;
  const short = (id: string) => id.slice(0, 10);
  const threads = to ? listThreads({ networkId: net.id, commitId: to.id }) : [];
  const toRuns = to
    ? runsOfCommit(to.id).map((r) => ({
        id: r.id,
        label: `${short(r.id)} · ${r.analysis ?? "not started"} · ${r.state}`,
      }))
    : [];

  return (
    <div className="space-y-8">
      <nav className="text-sm text-stone-600" aria-label="Breadcrumb">
        <Link href={`/w/${workspace.slug}`} className="hover:underline">
          {workspace.name}
        </Link>{" "}
        /{" "}
        <Link href={netPath} className="hover:underline">
          {net.name}
        </Link>{" "}
        / compare
      </nav>
      <h1 className="text-2xl font-semibold">Compare commits of {net.name}</h1>

      <form
        method="get"
        action={path}
        className="flex flex-wrap items-end gap-3 rounded border border-stone-300 bg-white p-3 text-sm"
        aria-label="Comparison"
      >
        <label className="flex flex-col">
          <span className="text-xs text-stone-500">from (older)</span>
          <select
            name="from"
            defaultValue={from?.id ?? ""}
            className="rounded border border-stone-300 px-2 py-1 font-mono"
          >
            {history.map((c) => (
              <option key={c.id} value={c.id}>
                {short(c.id)} {c.message.slice(0, 40)}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col">
          <span className="text-xs text-stone-500">to (newer)</span>
          <select name="to" defaultValue={to?.id ?? ""} className="rounded border border-stone-300 px-2 py-1 font-mono">
            {history.map((c) => (
              <option key={c.id} value={c.id}>
                {short(c.id)} {c.message.slice(0, 40)}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col">
          <span className="text-xs text-stone-500">relative tolerance</span>
          <input
            name="rel"
            defaultValue={q.rel ?? ""}
            placeholder={String(DEFAULT_TOLERANCE.rel)}
            className="w-24 rounded border border-stone-300 px-2 py-1 font-mono"
          />
        </label>
        <label className="flex flex-col">
          <span className="text-xs text-stone-500">absolute, currents (A)</span>
          <input
            name="absCurrent"
            defaultValue={q.absCurrent ?? ""}
            placeholder={String(DEFAULT_TOLERANCE.absCurrent)}
            className="w-24 rounded border border-stone-300 px-2 py-1 font-mono"
          />
        </label>
        <label className="flex flex-col">
          <span className="text-xs text-stone-500">absolute, voltages (V)</span>
          <input
            name="absVoltage"
            defaultValue={q.absVoltage ?? ""}
            placeholder={String(DEFAULT_TOLERANCE.absVoltage)}
            className="w-24 rounded border border-stone-300 px-2 py-1 font-mono"
          />
        </label>
        <label className="flex items-center gap-1">
          <input type="checkbox" name="all" value="1" defaultChecked={all} /> show values within tolerance
        </label>
        <input type="hidden" name="view" value={view} />
        <button type="submit" className="rounded bg-moss-600 px-3 py-1 text-white hover:bg-moss-700">
          Compare
        </button>
      </form>

      {history.length === 0 ? <p className="text-stone-600">This network has no commits yet.</p> : null}
      {problem ? (
        <p role="alert" className="text-ember-500">
          {problem}
        </p>
      ) : null}
      {from && to && from.id === to.id ? <p className="text-stone-600">Pick two different commits.</p> : null}
      {!from && to ? (
        <p className="text-stone-600">This is the first commit: pick an older one to compare with.</p>
      ) : null}

      {cmp ? (
        <>
          <section aria-labelledby="text-diff" className="space-y-2">
            <div className="flex items-baseline gap-4">
              <h2 id="text-diff" className="text-lg font-semibold">
                Text
              </h2>
              <span className="text-sm text-stone-600">
                <span className="text-moss-700">+{cmp.text.added}</span>{" "}
                <span className="text-ember-500">−{cmp.text.removed}</span> lines
              </span>
              <span className="flex-1" />
              <Link
                href={`${path}?${new URLSearchParams({ ...(Object.fromEntries(Object.entries(q).filter(([, v]) => v !== undefined)) as Record<string, string>), from: cmp.from.id, to: cmp.to.id, view: view === "side" ? "unified" : "side" })}`}
                className="text-sm text-moss-700 hover:underline"
              >
                {view === "side" ? "Unified view" : "Side-by-side view"}
              </Link>
            </div>
            {!cmp.text.complete ? (
              <p className="text-sm text-amber-800">
                The texts differ too much to pair lines; shown as a whole replacement.
              </p>
            ) : null}
            <div className="overflow-x-auto rounded border border-stone-300 bg-white font-mono text-xs">
              {view === "unified" ? (
                <table className="w-full border-collapse" aria-label="Unified diff">
                  <tbody>
                    {cmp.text.unified.map((r, i) =>
                      r.kind === "gap" ? (
                        <tr key={i} className="bg-stone-50 text-stone-500">
                          <td colSpan={3} className="px-2 py-0.5">
                            ⋯ {r.hidden} unchanged lines
                          </td>
                        </tr>
                      ) : (
                        <tr
                          key={i}
                          data-line={r.kind}
                          className={r.kind === "added" ? "bg-moss-50" : r.kind === "removed" ? "bg-ember-50" : ""}
                        >
                          <td className="w-10 select-none px-1 text-right text-stone-400">{r.oldLine ?? ""}</td>
                          <td className="w-10 select-none px-1 text-right text-stone-400">{r.newLine ?? ""}</td>
                          <td className="whitespace-pre px-2">
                            {r.kind === "added" ? "+ " : r.kind === "removed" ? "− " : "  "}
                            {r.text}
                          </td>
                        </tr>
                      ),
                    )}
                  </tbody>
                </table>
              ) : (
                <table className="w-full table-fixed border-collapse" aria-label="Side-by-side diff">
                  <tbody>
                    {cmp.text.sideBySide.map((r, i) =>
                      r.kind === "gap" ? (
                        <tr key={i} className="bg-stone-50 text-stone-500">
                          <td colSpan={4} className="px-2 py-0.5">
                            ⋯ {r.hidden} unchanged lines
                          </td>
                        </tr>
                      ) : (
                        <tr key={i} data-line={r.kind}>
                          <td className="w-10 select-none px-1 text-right text-stone-400">{r.left?.line ?? ""}</td>
                          <td className={`whitespace-pre px-2 ${r.left?.kind === "removed" ? "bg-ember-50" : ""}`}>
                            {r.left?.text ?? ""}
                          </td>
                          <td className="w-10 select-none border-l border-stone-200 px-1 text-right text-stone-400">
                            {r.right?.line ?? ""}
                          </td>
                          <td className={`whitespace-pre px-2 ${r.right?.kind === "added" ? "bg-moss-50" : ""}`}>
                            {r.right?.text ?? ""}
                          </td>
                        </tr>
                      ),
                    )}
                  </tbody>
                </table>
              )}
            </div>
          </section>

          <section aria-labelledby="results-diff" className="space-y-2">
            <h2 id="results-diff" className="text-lg font-semibold">
              Results
            </h2>
            <p className="text-sm text-stone-600">
              Newest finished run of each analysis:{" "}
              {cmp.runs.map((r) => (
                <span key={r.analysis} className="mr-3">
                  {r.analysis}:{" "}
                  {r.fromRunId ? (
                    <Link href={`/runs/${r.fromRunId}`} className="font-mono text-moss-700 hover:underline">
                      {short(r.fromRunId)}
                    </Link>
                  ) : (
                    "none"
                  )}{" "}
                  →{" "}
                  {r.toRunId ? (
                    <Link href={`/runs/${r.toRunId}`} className="font-mono text-moss-700 hover:underline">
                      {short(r.toRunId)}
                    </Link>
                  ) : (
                    "none"
                  )}
                </span>
              ))}
              {cmp.runs.length === 0 ? "neither commit has a finished run." : null}
            </p>
            <p className="text-sm" data-testid="moved-summary">
              <strong>{cmp.results.beyond.toLocaleString("en-US")}</strong> of{" "}
              {cmp.results.compared.toLocaleString("en-US")} values moved beyond tolerance (relative{" "}
              {cmp.results.tolerance.rel}, currents {formatEng(cmp.results.tolerance.absCurrent, "A")}, voltages{" "}
              {formatEng(cmp.results.tolerance.absVoltage, "V")}).
              {cmp.results.truncated ? " Only the first 2000 rows are listed." : ""}
            </p>
            {cmp.results.names.length ||
            cmp.results.analyses.added.length ||
            cmp.results.analyses.removed.length ||
            cmp.results.points.length ? (
              <ul className="text-sm" aria-label="Added and removed">
                {cmp.results.names.map((n) => (
                  <li key={n.kind}>
                    {n.kind}s{" "}
                    {n.added.length ? (
                      <>
                        added: <span className="font-mono text-moss-700">{n.added.join(", ")}</span>{" "}
                      </>
                    ) : null}
                    {n.removed.length ? (
                      <>
                        removed: <span className="font-mono text-ember-500">{n.removed.join(", ")}</span>
                      </>
                    ) : null}
                  </li>
                ))}
                {cmp.results.analyses.added.length ? (
                  <li>analyses only in the newer commit: {cmp.results.analyses.added.join(", ")}</li>
                ) : null}
                {cmp.results.analyses.removed.length ? (
                  <li>analyses only in the older commit: {cmp.results.analyses.removed.join(", ")}</li>
                ) : null}
                {cmp.results.points.map((p) => (
                  <li key={p.analysis}>
                    {p.analysis}: {p.added.length} points only in the newer run, {p.removed.length} only in the older
                  </li>
                ))}
              </ul>
            ) : null}
            {cmp.results.rows.length ? <ResultsTable rows={cmp.results.rows} /> : null}
            <p role="note" className="text-xs text-stone-500">
              Results are model estimates: silicon must be verified by measurement, and a foundry&apos;s models and
              design rules take precedence.
            </p>
          </section>
        </>
      ) : null}

      {to ? (
        <section aria-labelledby="threads" className="space-y-2">
          <h2 id="threads" className="text-lg font-semibold">
            Threads on {short(to.id)}
          </h2>
          {threads.length ? (
            <ul className="space-y-1 text-sm">
              {threads.map((t) => (
                <li key={t.id}>
                  <Link href={`/threads/${t.id}`} className="text-moss-700 hover:underline">
                    {t.title}
                  </Link>{" "}
                  <span className="text-stone-500">by {t.authorName}</span>
                </li>
              ))}
            </ul>
          ) : (
            <p className="text-sm text-stone-500">No threads on this commit yet.</p>
          )}
          {can("thread.comment") ? <NewThreadForm commitId={to.id} runs={toRuns} /> : null}
        </section>
      ) : null}

      <section aria-labelledby="history" className="space-y-2">
        <h2 id="history" className="text-lg font-semibold">
          History
        </h2>
        <ol className="divide-y divide-stone-200 rounded border border-stone-300 bg-white text-sm" aria-label="History">
          {history.map((c) => (
            <li key={c.id} className="flex flex-wrap items-center gap-2 px-3 py-2" data-commit={c.id}>
              <span className="font-mono text-xs">{short(c.id)}</span>
              <span className="flex-1">
                {c.message} <span className="text-stone-500">· {c.authorName}</span>
              </span>
              <CommitReviewBadges badge={badges.get(c.id)} />
              {c.parentId ? (
                <Link href={`${path}?from=${c.parentId}&to=${c.id}`} className="text-xs text-moss-700 hover:underline">
                  compare with parent
                </Link>
              ) : null}
            </li>
          ))}
        </ol>
      </section>
    </div>
  );
}

function ResultsTable({ rows }: { rows: DiffRow[] }) {
  return (
    <div className="overflow-x-auto rounded border border-stone-300 bg-white">
      <table className="w-full text-xs" aria-label="Results diff">
        <thead className="bg-stone-50 text-left text-stone-600">
          <tr>
            <th className="px-2 py-1">analysis</th>
            <th className="px-2 py-1">point</th>
            <th className="px-2 py-1">what</th>
            <th className="px-2 py-1">name</th>
            <th className="px-2 py-1 text-right">from</th>
            <th className="px-2 py-1 text-right">to</th>
            <th className="px-2 py-1 text-right">change</th>
            <th className="px-2 py-1 text-right">relative</th>
          </tr>
        </thead>
        <tbody className="tabular font-mono">
          {rows.map((r, i) => (
            <tr
              key={i}
              data-beyond={r.beyond ? "1" : "0"}
              className={r.beyond ? "bg-amber-50 font-semibold" : "text-stone-600"}
            >
              <td className="px-2 py-0.5 font-sans">{r.analysis}</td>
              <td className="px-2 py-0.5">{r.point}</td>
              <td className="px-2 py-0.5 font-sans">
                {r.kind} {r.quantity}
              </td>
              <td className="px-2 py-0.5">{r.name}</td>
              <td className="px-2 py-0.5 text-right">{fmt(r.from, r.quantity)}</td>
              <td className="px-2 py-0.5 text-right">{fmt(r.to, r.quantity)}</td>
              <td className="px-2 py-0.5 text-right">{fmt(r.abs, r.quantity)}</td>
              <td className="px-2 py-0.5 text-right">{fmtRel(r.rel)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
