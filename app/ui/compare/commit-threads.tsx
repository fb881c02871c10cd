/** The threads on the newer commit, and (for those who may comment) the form that opens one. */
import Link from "next/link";
import { NewThreadForm } from "@/app/ui/review/comment-form";

export interface CommitThreadsProps {
  commitId: string;
  threads: { id: string; title: string; authorName: string }[];
  /** The commit's runs a new thread may link to. */
  runs: { id: string; label: string }[];
  canComment: boolean;
}

export function CommitThreads({ commitId, threads, runs, canComment }: CommitThreadsProps) {
  return (
    <section aria-labelledby="threads" className="space-y-2">
      <h2 id="threads" className="text-lg font-semibold">
        Threads on {commitId.slice(0, 10)}
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
      {canComment ? <NewThreadForm commitId={commitId} runs={runs} /> : null}
    </section>
  );
}
