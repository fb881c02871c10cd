import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { commitAccess, found, runAccess } from "@/app/lib/access";
import { pageAccess } from "@/app/lib/pages";
import { roleAllows } from "@/app/lib/policy";
import { getWorkspace } from "@/app/lib/workspaces";
import { RunView } from "@/app/ui/run/run-view";
import { requestNotation } from "@/app/lib/notation";
import { storedExpectations } from "@/app/lib/run-expectations";
import { runFirstLook } from "@/app/lib/run-first-look";

export const dynamic = "force-dynamic";

type Props = { params: Promise<{ id: string }> };

export async function generateMetadata({ params }: Props): Promise<Metadata> {
  return { title: `Run ${(await params).id}` };
}

/** /runs/[id]: the permalink of a run, for members of its workspace (others get 404). */
export default async function RunPage({ params }: Props) {
  const { id } = await params;
  const { run, role, commit, network, ws } = await pageAccess(`/runs/${id}`, (actor) => {
    const { run, role } = runAccess(actor, "workspace.read", id);
    const { commit, network } = commitAccess(actor, "workspace.read", run.commitId);
    return { run, role, commit, network, ws: found(getWorkspace(run.workspaceId)) };
  });
  // A done run's first plot is drawn here, so the page shows it before its scripts have run (they then take over).
  const look = runFirstLook(run, await requestNotation());
  return (
    <div className="space-y-4">
      <nav aria-label="Breadcrumb" className="text-sm text-stone-600">
        <HoverLink href={`/w/${ws.slug}`} className="hover:text-moss-700">
          {ws.name}
        </HoverLink>{" "}
        /{" "}
        <HoverLink href={`/w/${ws.slug}/n/${network.slug}`} className="hover:text-moss-700">
          {network.name}
        </HoverLink>{" "}
        / run
      </nav>
      <header className="space-y-1">
        <h1 className="text-2xl font-semibold">
          Run <span className="font-mono text-xl">{run.id}</span>
        </h1>
        <p className="text-sm text-stone-600">
          of commit{" "}
          <HoverLink
            href={`/w/${ws.slug}/n/${network.slug}?commit=${commit.id}`}
            className="font-mono text-moss-700 hover:underline"
          >
            {commit.id.slice(0, 12)}
          </HoverLink>{" "}
          “{commit.message}” by {commit.authorName} ·{" "}
          <a href={`/api/commits/${commit.id}?download`} className="text-moss-700 hover:underline">
            download its text
          </a>
        </p>
      </header>
      <RunView
        runId={run.id}
        canRun={roleAllows(role, "run.start")}
        initial={{ run, expectations: storedExpectations(run.id) }}
        firstLook={look}
      />
    </div>
  );
}
