import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { notFound } from "next/navigation";
import { getCommit, networkBySlug } from "@/app/lib/networks";
import { workspacePage } from "@/app/lib/pages";
import { NetworkWorkbench } from "@/app/ui/workbench/network-workbench";
import { ReviewPanel } from "@/app/ui/review/review-panel";

export const dynamic = "force-dynamic";

type Props = { params: Promise<{ slug: string; network: string }>; searchParams: Promise<{ commit?: string }> };

export async function generateMetadata({ params }: Props): Promise<Metadata> {
  return { title: (await params).network };
}

/** /w/[slug]/n/[network][?commit=ID]: the editor, the history and the runs of the selected commit. */
export default async function NetworkPage({ params, searchParams }: Props) {
  const { slug, network: networkSlug } = await params;
  const { commit: wanted } = await searchParams;
  const { workspace, can } = await workspacePage(slug, `/w/${slug}/n/${networkSlug}`);
  const network = networkBySlug(workspace.id, networkSlug);
  if (!network) notFound();
  const asked = wanted ? getCommit(wanted) : null;
  const initialCommitId = asked && asked.networkId === network.id ? asked.id : network.headCommitId;
  return (
    <div className="space-y-4">
      <nav aria-label="Breadcrumb" className="text-sm text-stone-600">
        <HoverLink href={`/w/${workspace.slug}`} className="hover:text-moss-700">
          {workspace.name}
        </HoverLink>{" "}
        / network
      </nav>
      <h1 className="text-2xl font-semibold">{network.name}</h1>
      <NetworkWorkbench
        workspaceSlug={workspace.slug}
        network={network}
        initialCommitId={initialCommitId}
        canWrite={can("network.write")}
        canRun={can("run.start")}
      />
      {/* review: threads, sign-off state, moved values, measurements (app/ui/review) */}
      <ReviewPanel workspaceSlug={workspace.slug} network={network} canMeasure={can("measurement.write")} />
    </div>
  );
}
