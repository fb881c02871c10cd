import { OptionSelect } from "./option-select";

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
    <OptionSelect
      word="probe"
      label={label}
      value={String(value)}
      options={probes.map((p, i) => ({ value: String(i), text: p }))}
      onChange={(v) => onChange(Number(v))}
    />
  );
}
