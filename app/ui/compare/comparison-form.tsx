/** The compare page's form (GET): which two commits, and the tolerances. */
import type { CommitSummary } from "@/app/lib/networks";
import { DEFAULT_TOLERANCE } from "@/app/lib/review/results-diff";

export interface ComparisonFormProps {
  /** The page's own path: the form submits to it. */
  action: string;
  history: CommitSummary[];
  fromId: string | null;
  toId: string | null;
  /** The query as the page received it (tolerance fields keep what was typed). */
  query: Record<string, string | undefined>;
  view: "side" | "unified";
}

const short = (id: string) => id.slice(0, 10);

/** The tolerance fields: query name (a key of the default tolerance) and label. */
const TOLERANCES = [
  ["rel", "relative tolerance"],
  ["absCurrent", "absolute, currents (A)"],
  ["absVoltage", "absolute, voltages (V)"],
] as const;

export function ComparisonForm({ action, history, fromId, toId, query, view }: ComparisonFormProps) {
  return (
    <form
      method="get"
      action={action}
      className="flex flex-wrap items-end gap-3 rounded border border-stone-300 bg-white p-3 text-sm"
      aria-label="Comparison"
    >
      {(
        [
          ["from", "from (older)", fromId],
          ["to", "to (newer)", toId],
        ] as const
      ).map(([name, label, value]) => (
        <label key={name} className="flex flex-col">
          <span className="text-xs text-stone-500">{label}</span>
          <select
            name={name}
            defaultValue={value ?? ""}
            className="rounded border border-stone-300 px-2 py-1 font-mono"
          >
            {history.map((c) => (
              <option key={c.id} value={c.id}>
                {short(c.id)} {c.message.slice(0, 40)}
              </option>
            ))}
          </select>
        </label>
      ))}
      {TOLERANCES.map(([name, label]) => (
        <label key={name} className="flex flex-col">
          <span className="text-xs text-stone-500">{label}</span>
          <input
            name={name}
            defaultValue={query[name] ?? ""}
            placeholder={String(DEFAULT_TOLERANCE[name])}
            className="w-24 rounded border border-stone-300 px-2 py-1 font-mono"
          />
        </label>
      ))}
      <input type="hidden" name="view" value={view} />
      <button type="submit" className="rounded bg-moss-600 px-3 py-1 text-white hover:bg-moss-700">
        Compare
      </button>
    </form>
  );
}
