"use client";

import { useNotation } from "./notation";

/** The header's switch between SI prefixes ("12.34 nA") and plain scientific notation ("1.234e-8 A"). */
export function NotationToggle() {
  const { notation, setNotation } = useNotation();
  const sci = notation === "sci";
  return (
    <button
      type="button"
      onClick={() => setNotation(sci ? "si" : "sci")}
      aria-pressed={sci}
      title={
        sci
          ? "Values in scientific notation: switch to SI prefixes"
          : "Values with SI prefixes: switch to scientific notation"
      }
      className="rounded border border-stone-300 px-2 py-0.5 font-mono text-xs text-stone-600 hover:border-moss-500 hover:text-moss-700"
      data-testid="notation-toggle"
    >
      {sci ? "1.2e-9 A" : "1.2 nA"}
    </button>
  );
}
