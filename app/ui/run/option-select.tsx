/** "word [select]": a labelled choice among a view's options (which probe, which map, along which sweep). */
export interface OptionSelectProps {
  /** The word before the select ("probe", "map of", "along"). */
  word: string;
  /** The select's accessible name ("Probe to plot"). */
  label: string;
  value: string;
  options: { value: string; text: string }[];
  onChange(value: string): void;
}

export function OptionSelect({ word, label, value, options, onChange }: OptionSelectProps) {
  return (
    <label className="flex min-w-0 items-center gap-2">
      {word}
      <select
        value={value}
        onChange={(e) => onChange(e.target.value)}
        className="min-w-0 rounded border border-stone-300 bg-white px-1 py-0.5"
        aria-label={label}
      >
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.text}
          </option>
        ))}
      </select>
    </label>
  );
}
