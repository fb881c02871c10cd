import { eq } from "drizzle-orm";
import { db } from "@/db";
import { measurements } from "@/db/schema";
import { reviewAccess as guard } from "@/app/lib/review/access";
import { handle } from "@/app/lib/http";
import { getMeasurement } from "@/app/lib/review/measurement-store";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/measurements/[id] (workspace.read): the measurement with its values in SI units. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const m = getMeasurement((await ctx.params).id);
    await guard(request, "workspace.read", m?.workspaceId);
    return Response.json({ measurement: m });
  });
}

/** DELETE /api/measurements/[id] (measurement.write): removes the measurement. 204. */
export function DELETE(request: Request, ctx: Ctx) {
  return handle(async () => {
    const m = getMeasurement((await ctx.params).id);
    await guard(request, "measurement.write", m?.workspaceId);
    db().delete(measurements).where(eq(measurements.id, m!.id)).run();
    return new Response(null, { status: 204 });
  });
}
