import { requestNotation } from "@/app/lib/notation";
import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { notFound } from "next/navigation";
import { RequestError } from "@/app/lib/http";
import { getCommit, listCommits, networkBySlug } from "@/app/lib/networks";
import { workspacePage } from "@/app/lib/pages";
import { analysisSummaries, prepareComparisons, type AnalysisSummary } from "@/app/lib/review/compare-data";
import { commitBadges, compareCommits, type Comparison } from "@/app/lib/review/diffs";
import { runsOfCommit } from "@/app/lib/review/run-tables";
import { handleOf, listThreads } from "@/app/lib/review/threads";
import { listMembers } from "@/app/lib/members";
import { CommitHistory } from "@/app/ui/compare/commit-history";
import { SensitivityChanges } from "@/app/ui/compare/sensitivity-changes";
import { CommitThreads } from "@/app/ui/compare/commit-threads";
import { ComparisonForm } from "@/app/ui/compare/comparison-form";
import { ExpectationsSection } from "@/app/ui/compare/expectations-section";
import { ResultsDiffSection } from "@/app/ui/compare/results-diff-section";
import { TextDiffSection } from "@/app/ui/compare/text-diff-section";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Compare commits" };

type Props = {
  params: Promise<{ slug: string; network: string }>;
  searchParams: Promise<Record<string, string | undefined>>;
};

const num = (s: string | undefined) =>
  s !== undefined && s.trim() !== "" && Number.isFinite(Number(s)) && Number(s) >= 0 ? Number(s) : undefined;

/** /w/[slug]/n/[network]/compare?from=C1&to=C2: text and results diff of two commits, the history with review badges. */
export default async function ComparePage({ params, searchParams }: Props) {
  const { slug, network: netSlug } = await params;
  const q = await searchParams;
  const path = `/w/${slug}/n/${netSlug}/compare`;
  const { workspace, can } = await workspacePage(slug, path);
  const notation = await requestNotation();
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
  const view = q.view === "unified" ? "unified" : "side";
  let cmp: Comparison | null = null;
  let analyses: AnalysisSummary[] = [];
  let problem: string | null = null;
  if (from && to) {
    try {
      await prepareComparisons(from.id, to.id, tol);
      cmp = compareCommits(from.id, to.id, { tolerance: tol, limit: 0 });
      analyses = analysisSummaries(from.id, to.id, tol);
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

  const otherViewHref = cmp
    ? `${path}?${new URLSearchParams({ ...(Object.fromEntries(Object.entries(q).filter(([, v]) => v !== undefined)) as Record<string, string>), from: cmp.from.id, to: cmp.to.id, view: view === "side" ? "unified" : "side" })}`
    : path;

  return (
    <div className="space-y-8">
      <nav className="text-sm text-stone-600" aria-label="Breadcrumb">
        <HoverLink href={`/w/${workspace.slug}`} className="hover:underline">
          {workspace.name}
        </HoverLink>{" "}
        /{" "}
        <HoverLink href={netPath} className="hover:underline">
          {net.name}
        </HoverLink>{" "}
        / compare
      </nav>
      <h1 className="text-2xl font-semibold">Compare commits of {net.name}</h1>

      <ComparisonForm
        action={path}
        history={history}
        fromId={from?.id ?? null}
        toId={to?.id ?? null}
        query={q}
        view={view}
      />

      {to ? (
        <CommitThreads
          commitId={to.id}
          message={to.message}
          review={badges.get(to.id)?.review ?? "open"}
          threads={threads}
          runs={toRuns}
          canComment={can("thread.comment")}
          members={listMembers(workspace.id).map((m) => ({ handle: handleOf(m.email), name: m.name }))}
          startOpen={q.thread === "new"}
        />
      ) : null}

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
          <TextDiffSection
            text={cmp.text}
            view={view}
            otherViewHref={otherViewHref}
            labels={[`before · ${short(cmp.from.id)}`, `after · ${short(cmp.to.id)}`]}
          />
          <ExpectationsSection
            notation={notation}
            changes={cmp.expectations}
            labels={[`before · ${short(cmp.from.id)}`, `after · ${short(cmp.to.id)}`]}
          />
          <SensitivityChanges fromId={cmp.from.id} toId={cmp.to.id} />
          <ResultsDiffSection
            notation={notation}
            comparison={cmp}
            analyses={analyses}
            query={{
              from: cmp.from.id,
              to: cmp.to.id,
              ...(Object.fromEntries(Object.entries(tol).map(([k, v]) => [k, String(v)])) as Record<string, string>),
            }}
          />
        </>
      ) : null}

      <CommitHistory history={history} badges={badges} comparePath={path} />
    </div>
  );
}
