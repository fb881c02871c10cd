/** Operating regions by inversion coefficient. */

/** Inversion coefficient limits of the regions (common practice: weak below 0.1, strong above 10). */
export const WEAK_IC = 0.1;
export const STRONG_IC = 10;

export function region(ic: number): string {
  if (Number.isNaN(ic)) return "—";
  if (ic < WEAK_IC) return "weak";
  if (ic <= STRONG_IC) return "moderate";
  return "strong";
}
