import { HoverLink } from "@/app/ui/hover-link";
import { getActor } from "@/app/lib/auth";
import { listWorkspacesFor } from "@/app/lib/workspaces";
import { DemoAccounts } from "./ui/demo-accounts";
import { NewWorkspaceForm } from "./w/new-workspace-form";

export const dynamic = "force-dynamic";

export default async function HomePage() {
  const actor = await getActor();
  if (!actor) {
    return (
      <div className="max-w-3xl space-y-6">
        <section className="space-y-2">
          <h1 className="text-2xl font-semibold">Workspaces</h1>
          <p className="text-stone-600">
            A workspace holds one chip or block: its networks, their commits and runs, bench measurements and review
            threads. Sign in to see the workspaces you are a member of.
          </p>
          <p className="flex gap-3 pt-2">
            <HoverLink
              href="/signin"
              className="rounded bg-moss-600 px-3 py-1.5 text-sm font-medium text-white hover:bg-moss-700"
            >
              Sign in
            </HoverLink>
            <HoverLink
              href="/signup"
              className="rounded border border-stone-300 px-3 py-1.5 text-sm hover:bg-stone-100"
            >
              Create an account
            </HoverLink>
          </p>
        </section>
        <DemoAccounts />
      </div>
    );
  }
  const workspaces = listWorkspacesFor(actor.userId);
  return (
    <div className="space-y-8">
      <section className="max-w-3xl space-y-2">
        <h1 className="text-2xl font-semibold">Workspaces</h1>
        <p className="text-stone-600">
          A workspace holds one chip or block: its networks, their commits and runs, bench measurements and review
          threads.
        </p>
      </section>
      {workspaces.length === 0 ? (
        <p className="rounded border border-dashed border-stone-300 bg-white p-6 text-stone-600">
          You are not a member of any workspace yet. Create one below, or ask an owner to invite you.
        </p>
      ) : (
        <ul className="grid gap-4 sm:grid-cols-2" aria-label="Workspaces">
          {workspaces.map((w) => (
            <li key={w.id} className="rounded border border-stone-300 bg-white p-4 shadow-sm">
              <div className="flex items-baseline justify-between gap-2">
                <HoverLink href={`/w/${w.slug}`} className="font-medium text-moss-700 hover:underline">
                  {w.name}
                </HoverLink>
                <span className="text-xs text-stone-500">{w.role}</span>
              </div>
              <p className="mt-1 text-sm text-stone-600">{w.description}</p>
            </li>
          ))}
        </ul>
      )}
      <section className="max-w-xl space-y-3" aria-labelledby="new-workspace-heading">
        <h2 id="new-workspace-heading" className="text-lg font-semibold">
          New workspace
        </h2>
        <NewWorkspaceForm />
      </section>
    </div>
  );
}
