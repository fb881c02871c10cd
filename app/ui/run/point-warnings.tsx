/**
 * The chosen point's flagged devices grouped by name pattern, each with its
 * counts and a link that opens the Devices tab filtered to that pattern.
 * Nothing when every device is in weak inversion and saturated.
 */
import type { PointData } from "@/app/lib/point-codec";
import { flaggedGroups } from "./device-groups";

export interface PointWarningsProps {
  point: PointData;
  /** Show the devices of `pattern` (the Devices tab, filtered, only flagged). */
  onShow(pattern: string): void;
}

export function PointWarnings({ point, onShow }: PointWarningsProps) {
  const groups = flaggedGroups(point);
  if (!groups.length) return null;
  const shown = groups.slice(0, 8);
  return (
    <div
      className="flex flex-wrap items-baseline gap-x-3 gap-y-1 rounded border border-amber-300 bg-amber-50 px-3 py-1.5 text-sm text-amber-900"
      aria-label="Flagged devices at this point"
      data-slot="point-warnings"
    >
      <span className="font-medium">▲ At this point:</span>
      {shown.map((g) => (
        <button
          key={g.pattern}
          type="button"
          onClick={() => onShow(g.pattern)}
          className="rounded px-1 text-left underline decoration-amber-400 underline-offset-2 hover:bg-amber-100"
          data-pattern={g.pattern}
        >
          <span className="font-mono">{g.pattern}</span>{" "}
          {[
            g.notWeak ? `${g.notWeak} of ${g.total} outside weak inversion` : null,
            g.notSaturated ? `${g.notSaturated} of ${g.total} not saturated` : null,
          ]
            .filter(Boolean)
            .join(", ")}
        </button>
      ))}
      {groups.length > shown.length ? <span>and {groups.length - shown.length} more patterns</span> : null}
    </div>
  );
}
