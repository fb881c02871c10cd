import Link from "next/link";
import type { Comparison } from "@/app/lib/review/diffs";

const short = (id: string) => id.slice(0, 10);

/** Which runs the results diff compares: per analysis, the newest finished run of each commit (or none). */
export function ComparedRuns({ runs }: { runs: Comparison["runs"] }) {
  return (
    <p className="text-sm text-stone-600">
      Newest finished run of each analysis:{" "}
      {runs.map((r) => (
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
      {runs.length === 0 ? "neither commit has a finished run." : null}
    </p>
  );
}
