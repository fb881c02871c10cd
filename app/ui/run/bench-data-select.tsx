import type { BenchData } from "./bench-data";

/** The select; renders nothing while the network has no measurements. `onChoose` runs after the choice (a view may follow the matched curve). */
export function BenchDataSelect({ bench, onChoose }: { bench: BenchData; onChoose?: () => void }) {
  if (bench.measurements.length === 0) return null;
  return (
    <label className="flex items-center gap-2">
      bench data
      <select
        value={bench.chosen?.id ?? ""}
        onChange={(e) => {
          bench.choose(e.target.value);
          onChoose?.();
        }}
        className="rounded border border-stone-300 bg-white px-1 py-0.5"
        aria-label="Bench data"
      >
        <option value="">none</option>
        {bench.measurements.map((m) => (
          <option key={m.id} value={m.id}>
            {m.name} · {m.rows} rows · {m.xName} [{m.xUnit}] vs {m.series.map((s) => s.name).join(", ")}
          </option>
        ))}
      </select>
    </label>
  );
}
