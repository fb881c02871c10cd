import { z } from "zod";
import { commitAccess, requestActor, runAccess } from "@/app/lib/access";
import { exportInWorker, exportRunOf } from "@/app/lib/export";
import { handle, parseInput, queryOf, RequestError } from "@/app/lib/http";
import { hasLayout } from "@/app/lib/run-layouts";
import { CSV_TABLES } from "@/src/solver/csv";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

const Query = z.object({
  format: z.enum(["csv", "json"]).default("csv"),
  /** CSV only: which table (probes: one row per point; nodes, devices, rails: one row per point and name). */
  table: z.enum(CSV_TABLES).default("probes"),
  point: z.coerce.number().int().min(0).optional(),
});

/**
 * GET /api/runs/[id]/export?format=csv|json[&table=probes|nodes|devices|rails][&point=K] (workspace.read):
 * the stored results as a download, streamed point by point. JSON has the shape of `runnel solve --json`
 * (docs/language.md, The runnel command), plus a `run` member naming the run and commit.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const actor = await requestActor(request);
    const { run } = runAccess(actor, "workspace.read", (await ctx.params).id);
    const q = parseInput(Query, queryOf(request));
    // The layout itself (seconds to parse for a large network) is read by the export's own thread.
    if (!hasLayout(run.id))
      throw new RequestError(409, `the run has no results yet (${run.state})`, { state: run.state });
    const { commit, network } = commitAccess(actor, "workspace.read", run.commitId);
    const base = `${network.slug}-${run.id}`;
    const task = {
      run: exportRunOf(run),
      commit: { id: commit.id, ok: commit.ok, diagnostics: commit.diagnostics },
    };
    if (q.format === "json") {
      return new Response(exportInWorker({ ...task, format: "json", table: q.table }), {
        headers: {
          "content-type": "application/json; charset=utf-8",
          "content-disposition": `attachment; filename="${base}.json"`,
          "cache-control": "no-store",
        },
      });
    }
    return new Response(exportInWorker({ ...task, format: "csv", table: q.table, point: q.point }), {
      headers: {
        "content-type": "text/csv; charset=utf-8",
        "content-disposition": `attachment; filename="${base}-${q.table}.csv"`,
        "cache-control": "no-store",
      },
    });
  });
}
