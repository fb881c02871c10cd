import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { workspacePage } from "@/app/lib/pages";
import { NetworkList } from "@/app/ui/workbench/network-list";

export const dynamic = "force-dynamic";

type Props = { params: Promise<{ slug: string }> };

export async function generateMetadata({ params }: Props): Promise<Metadata> {
  return { title: (await params).slug };
}

/** /w/[slug]: a workspace. The header is the accounts feature's; the networks region belongs to the workbench. */
export default async function WorkspacePageView({ params }: Props) {
  const { slug } = await params;
  const { workspace, role, can } = await workspacePage(slug, `/w/${slug}`);
  return (
    <div className="space-y-8">
      <header className="flex flex-wrap items-baseline justify-between gap-4 border-b border-stone-200 pb-4">
        <div className="space-y-1">
          <h1 className="text-2xl font-semibold">{workspace.name}</h1>
          {workspace.description ? <p className="text-stone-600">{workspace.description}</p> : null}
        </div>
        <nav className="flex items-center gap-4 text-sm">
          <span className="rounded bg-stone-100 px-2 py-0.5 text-stone-600" title="Your role in this workspace">
            {role}
          </span>
          <HoverLink href={`/w/${workspace.slug}/members`} className="text-moss-700 hover:underline">
            Members
          </HoverLink>
        </nav>
      </header>
      <NetworkList slug={workspace.slug} canWrite={can("network.write")} canManage={can("workspace.manage")} />
    </div>
  );
}
