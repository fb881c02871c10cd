import type { ResultsDiff } from "@/app/lib/review/results-diff";

/** Names, analyses and points present in only one of the two commits' results; nothing when both have the same. */
export function AddedRemoved({ results }: { results: ResultsDiff }) {
  if (
    !results.names.length &&
    !results.analyses.added.length &&
    !results.analyses.removed.length &&
    !results.points.length
  )
    return null;
  return (
    <ul className="text-sm" aria-label="Added and removed">
      {results.names.map((n) => (
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
      {results.analyses.added.length ? (
        <li>analyses only in the newer commit: {results.analyses.added.join(", ")}</li>
      ) : null}
      {results.analyses.removed.length ? (
        <li>analyses only in the older commit: {results.analyses.removed.join(", ")}</li>
      ) : null}
      {results.points.map((p) => (
        <li key={p.analysis}>
          {p.analysis}: {p.added.length} points only in the newer run, {p.removed.length} only in the older
        </li>
      ))}
    </ul>
  );
}
