import { z } from "zod";
import { commitAccess, requestActor, runAccess } from "@/app/lib/access";
import { handle, parseInput, queryOf } from "@/app/lib/http";
import { commitSensitivity } from "@/app/lib/sensitivity-cache";
import { sensitivityCsv } from "@/app/lib/sensitivity-view";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

const Query = z.object({ format: z.enum(["json", "csv"]).default("json") });

/**
 * GET /api/runs/[id]/sensitivity[?format=json|csv] (workspace.read): the adjoint sensitivities of every probe of
 * the run's network and its first-order mismatch budget, at the file's own point, as `runnel sensitivity --json`
 * gives them (app/lib/sensitivity-view.ts), computed in the interactive pool once per commit. CSV is a download.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const actor = await requestActor(request);
    const { run } = runAccess(actor, "workspace.read", (await ctx.params).id);
    const q = parseInput(Query, queryOf(request));
    const { commit, network } = commitAccess(actor, "workspace.read", run.commitId);
    const v = await commitSensitivity(commit);
    if (q.format === "csv")
      return new Response(sensitivityCsv(v), {
        headers: {
          "content-type": "text/csv; charset=utf-8",
          "content-disposition": `attachment; filename="${network.slug}-${run.id}-sensitivity.csv"`,
          "cache-control": "no-store",
        },
      });
    return Response.json({ runId: run.id, commitId: commit.id, ...v }, { headers: { "cache-control": "no-store" } });
  });
}
