import { z } from "zod";
import { requestActor, runAccess } from "@/app/lib/access";
import { fresh, handle, parseInput, queryOf, RequestError } from "@/app/lib/http";
import {
  layoutJson,
  pointBinary,
  pointView,
  POINT_VIEW_LIMIT,
  runLayout,
  runLayoutHead,
  seriesJson,
  seriesView,
} from "@/app/lib/results";
import { roundingReplacer } from "@/app/lib/format";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

const Query = z.discriminatedUnion("view", [
  z.object({
    view: z.literal("series"),
    from: z.coerce.number().int().min(0).optional(),
    to: z.coerce.number().int().min(0).optional(),
    /** Numbers at this many significant digits (default: as stored, 17). */
    digits: z.coerce.number().int().min(4).max(17).optional(),
  }),
  z.object({
    view: z.literal("point"),
    point: z.coerce.number().int().min(0).default(0),
    format: z.enum(["json", "binary"]).default("json"),
    /** JSON only: the first node and device, and how many of each (at most POINT_VIEW_LIMIT). */
    offset: z.coerce.number().int().min(0).default(0),
    limit: z.coerce.number().int().min(1).max(POINT_VIEW_LIMIT).default(POINT_VIEW_LIMIT),
  }),
  z.object({ view: z.literal("layout") }),
]);

/**
 * GET /api/runs/[id]/results (workspace.read)
 * - `?view=series[&from=A&to=B][&digits=D]`: params, probes and solver figures of every stored point, column by
 *   column; `digits` rounds the numbers to D (4–17) significant digits (the run page asks for 7);
 * - `?view=point&point=K[&offset=O&limit=L]`: point K's rails and probes, and its nodes and devices from O, at most
 *   L (default and largest POINT_VIEW_LIMIT) of each, names included; `page` says what was left out;
 *   `&format=binary`: the same numbers without names as stored (app/lib/point-codec.ts), what the run page reads;
 * - `?view=layout`: the names (nodes, devices, rails, probes, params), sweeps and mismatch of the run.
 * Results never change once stored; a live run's series grows as points are stored.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { run } = runAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    const q = parseInput(Query, { view: "series", ...queryOf(request) });
    // The head (params, probes, sweeps, counts) is enough for all but the point view's names.
    const layout = runLayoutHead(run.id);
    if (!layout) throw new RequestError(409, `the run has no results yet (${run.state})`, { state: run.state });
    if (q.view === "series") {
      if (q.from !== undefined && q.to !== undefined && q.from > q.to)
        throw new RequestError(400, `from: must not be after to (from=${q.from}, to=${q.to})`);
      const head = { run: { id: run.id, state: run.state } };
      if (q.from === undefined && q.to === undefined) {
        // A done run's series never changes again: the browser may keep it (a second visit sends nothing).
        const cache = run.state === "done" ? "private, max-age=86400" : "no-store";
        return new Response(seriesJson(run.id, layout, head, undefined, q.digits), {
          headers: { "content-type": "application/json", "cache-control": cache },
        });
      }
      const part = { ...head, series: seriesView(run.id, layout, q.from, q.to) };
      if (q.digits === undefined) return fresh(part);
      return new Response(JSON.stringify(part, roundingReplacer(q.digits)), {
        headers: { "content-type": "application/json", "cache-control": "no-store" },
      });
    }
    // The layout and a stored point never change: the browser may keep them.
    const keep = { "cache-control": "private, max-age=86400" };
    if (q.view === "layout")
      return new Response(layoutJson(run.id), { headers: { ...keep, "content-type": "application/json" } });
    if (q.format === "binary") {
      const bin = pointBinary(run.id, layout, q.point);
      if (!bin)
        throw new RequestError(
          404,
          `point ${q.point} is not stored (the run has ${run.pointsDone} of ${run.pointsTotal} points)`,
        );
      return new Response(bin, { headers: { ...keep, "content-type": "application/octet-stream" } });
    }
    const point = pointView(run.id, runLayout(run.id)!, q.point, undefined, q.offset, q.limit);
    if (!point)
      throw new RequestError(
        404,
        `point ${q.point} is not stored (the run has ${run.pointsDone} of ${run.pointsTotal} points)`,
      );
    return fresh({ run: { id: run.id, state: run.state }, point });
  });
}
