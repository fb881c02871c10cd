import { z } from "zod";
import { commitAccess, requestActor, runAccess } from "@/app/lib/access";
import { handle, readJson } from "@/app/lib/http";
import { seekInWorker } from "@/app/lib/interactive";
import { listSeeks, storeSeek } from "@/app/lib/run-seeks";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

const Spec = z.object({
  param: z.string().min(1).max(200),
  low: z.number().finite(),
  high: z.number().finite(),
  probe: z.string().min(1).max(200),
  target: z.number().finite(),
});

/**
 * GET /api/runs/[id]/seek (workspace.read): the goal-seeks the run's network states (`seek` statements), each
 * found by Brent's method as `runnel seek --json` gives it (app/lib/sensitivity-view.ts), in the interactive pool;
 * and `asked`: the seeks members asked on this run, kept with it, newest first.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const actor = await requestActor(request);
    const { run } = runAccess(actor, "workspace.read", (await ctx.params).id);
    const { commit } = commitAccess(actor, "workspace.read", run.commitId);
    const stated = await seekInWorker(commit.text, undefined, request.signal);
    return Response.json({ ...stated, asked: listSeeks(run.id) }, { headers: { "cache-control": "no-store" } });
  });
}

/**
 * POST /api/runs/[id]/seek (run.start) { param, low, high, probe, target }: a goal-seek on the run's network that the
 * file does not state: the value of `param` in [low, high] giving `probe` = `target` (SI numbers, the param's and
 * probe's units), one search per point of the other sweeps. Computed in the interactive pool, then kept with the run
 * (app/lib/run-seeks.ts): the answer names it (`id`), and GET lists it for every member.
 */
export function POST(request: Request, ctx: Ctx) {
  return handle(async () => {
    const actor = await requestActor(request);
    const { run, actor: member } = runAccess(actor, "run.start", (await ctx.params).id);
    const spec = await readJson(request, Spec);
    const { commit } = commitAccess(actor, "workspace.read", run.commitId);
    const view = await seekInWorker(commit.text, spec, request.signal);
    const id = storeSeek(run.id, member.userId, spec, view);
    return Response.json({ ...view, id }, { headers: { "cache-control": "no-store" } });
  });
}
