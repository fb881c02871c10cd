import { z } from "zod";
import { commitPairAccess, requestActor } from "@/app/lib/access";
import { handle, parseInput, queryOf } from "@/app/lib/http";
import { compareCommits } from "@/app/lib/review/diffs";
import { analysisSummaries, prepareComparisons } from "@/app/lib/review/compare-data";
import { toleranceOf, ToleranceQuery } from "@/app/lib/review/compare-query";

export const dynamic = "force-dynamic";

const Query = ToleranceQuery.extend({
  from: z.string().min(1, "name the older commit"),
  to: z.string().min(1, "name the newer commit"),
  all: z.enum(["0", "1"]).optional(),
  limit: z.coerce.number().int().min(0).max(20_000).optional(),
});

/**
 * GET /api/compare?from=C1&to=C2[&rel=1e-6&absCurrent=1e-15&absVoltage=1e-6&absProbe=1e-15&all=1&limit=N]
 * (workspace.read): the text diff, and per matched analysis the summaries of
 * what moved (`analyses`: probes, then nodes, devices and rails by kind). The
 * flat value rows of `results` are sent only when `limit` asks for them
 * (default none); page through entities with /api/compare/entities instead.
 * A commit in a workspace the actor is not a member of is 404, like an unknown one.
 */
export function GET(request: Request) {
  return handle(async () => {
    const q = parseInput(Query, queryOf(request));
    const { from, to, network } = commitPairAccess(await requestActor(request), "workspace.read", q.from, q.to);
    const tolerance = toleranceOf(q);
    await prepareComparisons(from.id, to.id, tolerance);
    const c = compareCommits(from.id, to.id, { tolerance, includeWithin: q.all === "1", limit: q.limit ?? 0 });
    return Response.json({
      ...c,
      analyses: analysisSummaries(from.id, to.id, tolerance),
      network: { id: network.id, slug: network.slug, name: network.name },
    });
  });
}
