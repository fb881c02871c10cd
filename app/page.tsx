import Link from "next/link";
import { listWorkspaces } from "@/app/lib/workspaces";

export const dynamic = "force-dynamic";

export default function HomePage() {
  const workspaces = listWorkspaces();
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
          No workspaces yet. Run <code className="font-mono">npm run db:seed</code> to load the demo team.
        </p>
      ) : (
        <ul className="grid gap-4 sm:grid-cols-2" aria-label="Workspaces">
          {workspaces.map((w) => (
            <li key={w.id} className="rounded border border-stone-300 bg-white p-4 shadow-sm">
              <Link href={`/w/${w.slug}`} className="font-medium text-moss-700 hover:underline">
                {w.name}
              </Link>
              <p className="mt-1 text-sm text-stone-600">{w.description}</p>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
