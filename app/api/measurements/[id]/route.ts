import { measurementAccess, requestActor } from "@/app/lib/access";
import { handle } from "@/app/lib/http";
import { deleteMeasurement } from "@/app/lib/review/measurement-store";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/measurements/[id] (workspace.read): the measurement with its values in SI units. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { measurement } = measurementAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    return Response.json({ measurement });
  });
}

/** DELETE /api/measurements/[id] (measurement.write): removes the measurement. 204. */
export function DELETE(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { measurement } = measurementAccess(await requestActor(request), "measurement.write", (await ctx.params).id);
    deleteMeasurement(measurement.id);
    return new Response(null, { status: 204 });
  });
}
