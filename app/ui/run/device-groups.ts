/**
 * Flagged devices grouped by name pattern, for the validity warnings: the
 * devices a for loop made (`lat0` … `lat14`, `n3_4`) share a pattern
 * (`lat·`, `n·_·`), so "14 of 15 lat· not saturated" replaces fourteen lines.
 * A pattern is also a filter of the Devices table (devicesMatching).
 */
import type { PointData } from "@/app/lib/point-codec";
import { WEAK_INVERSION_IC } from "@/src/lang/vocabulary";

/** A name's pattern: every run of digits becomes "·" ("lat12" → "lat·", "n3_4" → "n·_·", "bias" stays). */
export function namePattern(name: string): string {
  return name.replace(/\d+/g, "·");
}

/** Whether `name` passes the Devices table's filter `text`: a pattern (with "·") matches exactly, other text as a substring. */
export function nameMatches(name: string, text: string): boolean {
  const t = text.trim();
  if (!t) return true;
  if (t.includes("·")) return namePattern(name) === t;
  return name.toLowerCase().includes(t.toLowerCase());
}

export interface FlagGroup {
  pattern: string;
  /** Devices of the pattern at this point. */
  total: number;
  /** Of them, outside weak inversion (IC > 0.1). */
  notWeak: number;
  /** Of them, not saturated. */
  notSaturated: number;
}

/** The point's flagged devices grouped by pattern, most flagged first. */
export function flaggedGroups(point: Pick<PointData, "devices">): FlagGroup[] {
  const groups = new Map<string, FlagGroup>();
  const d = point.devices;
  for (let k = 0; k < d.names.length; k++) {
    const pattern = namePattern(d.names[k]);
    let g = groups.get(pattern);
    if (!g) groups.set(pattern, (g = { pattern, total: 0, notWeak: 0, notSaturated: 0 }));
    g.total++;
    if (d.ic[k] > WEAK_INVERSION_IC) g.notWeak++;
    if (d.saturated[k] !== 1) g.notSaturated++;
  }
  return [...groups.values()]
    .filter((g) => g.notWeak || g.notSaturated)
    .sort((a, b) => b.notWeak + b.notSaturated - (a.notWeak + a.notSaturated) || a.pattern.localeCompare(b.pattern));
}
