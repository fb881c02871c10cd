/** The tolerance fields every compare route accepts in its query (results-diff.ts Tolerance). */
import { z } from "zod";
import type { Tolerance } from "./results-diff";

const tol = z.coerce.number().finite().nonnegative().optional();

export const ToleranceQuery = z.object({ rel: tol, absCurrent: tol, absVoltage: tol, absProbe: tol });

/** The tolerance fields that were given (the rest stay at their defaults). */
export function toleranceOf(q: z.infer<typeof ToleranceQuery>): Partial<Tolerance> {
  return Object.fromEntries(
    Object.entries({ rel: q.rel, absCurrent: q.absCurrent, absVoltage: q.absVoltage, absProbe: q.absProbe }).filter(
      ([, v]) => v !== undefined,
    ),
  );
}
