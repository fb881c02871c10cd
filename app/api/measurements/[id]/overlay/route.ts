import { z } from "zod";
import { measurementAccess, requestActor } from "@/app/lib/access";
import { handle, parseInput, queryOf } from "@/app/lib/http";
import { overlay } from "@/app/lib/review/measurement-store";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

const Query = z.object({ run: z.string().min(1, "name the run"), x: z.string().min(1).optional() });

/**
 * GET /api/measurements/[id]/overlay?run=R[&x=param] (workspace.read): measured
 * and simulated curves per series and their agreement (RMS of the log ratio,
 * largest absolute error). 422 when the run does not sweep the measurement's x.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const q = parseInput(Query, queryOf(request));
    const { measurement } = measurementAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    return Response.json(overlay(measurement.id, q.run, { xParam: q.x }));
  });
}
