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

export function ComparisonForm({ action, history, fromId, toId, query, view }: ComparisonFormProps) {
  return (
    <form
      method="get"
      action={action}
      className="flex flex-wrap items-end gap-3 rounded border border-stone-300 bg-white p-3 text-sm"
      aria-label="Comparison"
    >
      <label className="flex flex-col">
        <span className="text-xs text-stone-500">from (older)</span>
        <select name="from" defaultValue={fromId ?? ""} className="rounded border border-stone-300 px-2 py-1 font-mono">
          {history.map((c) => (
            <option key={c.id} value={c.id}>
              {short(c.id)} {c.message.slice(0, 40)}
            </option>
          ))}
        </select>
      </label>
      <label className="flex flex-col">
        <span className="text-xs text-stone-500">to (newer)</span>
        <select name="to" defaultValue={toId ?? ""} className="rounded border border-stone-300 px-2 py-1 font-mono">
          {history.map((c) => (
            <option key={c.id} value={c.id}>
              {short(c.id)} {c.message.slice(0, 40)}
            </option>
          ))}
        </select>
      </label>
      <label className="flex flex-col">
        <span className="text-xs text-stone-500">relative tolerance</span>
        <input
          name="rel"
          defaultValue={query.rel ?? ""}
          placeholder={String(DEFAULT_TOLERANCE.rel)}
          className="w-24 rounded border border-stone-300 px-2 py-1 font-mono"
        />
      </label>
      <label className="flex flex-col">
        <span className="text-xs text-stone-500">absolute, currents (A)</span>
        <input
          name="absCurrent"
          defaultValue={query.absCurrent ?? ""}
          placeholder={String(DEFAULT_TOLERANCE.absCurrent)}
          className="w-24 rounded border border-stone-300 px-2 py-1 font-mono"
        />
      </label>
      <label className="flex flex-col">
        <span className="text-xs text-stone-500">absolute, voltages (V)</span>
        <input
          name="absVoltage"
          defaultValue={query.absVoltage ?? ""}
          placeholder={String(DEFAULT_TOLERANCE.absVoltage)}
          className="w-24 rounded border border-stone-300 px-2 py-1 font-mono"
        />
      </label>
      <input type="hidden" name="view" value={view} />
      <button type="submit" className="rounded bg-moss-600 px-3 py-1 text-white hover:bg-moss-700">
        Compare
      </button>
    </form>
  );
}
