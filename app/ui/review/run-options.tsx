/** A thread's runs as a select's options: a run to link, pin or overlay. */

/** A run as the review forms list it: its id and what the reader sees. */
export interface RunChoice {
  id: string;
  label: string;
}

export function RunOptions({ runs }: { runs: RunChoice[] }) {
  return (
    <>
      {runs.map((r) => (
        <option key={r.id} value={r.id}>
          {r.label}
        </option>
      ))}
    </>
  );
}
