/** "probe [select]": which of the run's probes a view shows. */
export function ProbeSelect({
  probes,
  value,
  onChange,
  label,
}: {
  probes: string[];
  value: number;
  onChange(index: number): void;
  label: string;
}) {
  return (
    <label className="flex items-center gap-2">
      probe
      <select
        value={value}
        onChange={(e) => onChange(Number(e.target.value))}
        className="rounded border border-stone-300 bg-white px-1 py-0.5"
        aria-label={label}
      >
        {probes.map((p, i) => (
          <option key={p} value={i}>
            {p}
          </option>
        ))}
      </select>
    </label>
  );
}
