/** Operating regions by inversion coefficient. */

import { STRONG_INVERSION_IC, WEAK_INVERSION_IC } from "@/src/lang/vocabulary";

export function region(ic: number): string {
  if (Number.isNaN(ic)) return "—";
  if (ic < WEAK_INVERSION_IC) return "weak";
  if (ic <= STRONG_INVERSION_IC) return "moderate";
  return "strong";
}
