import { z } from "zod";
import { commitAccess, requestActor } from "@/app/lib/access";
import { handle, parseInput, queryOf, RequestError } from "@/app/lib/http";
import { compareCommits } from "@/app/lib/review/diffs";

export const dynamic = "force-dynamic";

const tol = z.coerce.number().finite().nonnegative().optional();
const Query = z.object({
  from: z.string().min(1, "name the older commit"),
  to: z.string().min(1, "name the newer commit"),
  rel: tol,
  absCurrent: tol,
  absVoltage: tol,
  absProbe: tol,
  all: z.enum(["0", "1"]).optional(),
  limit: z.coerce.number().int().min(1).max(20_000).optional(),
});

/**
 * GET /api/compare?from=C1&to=C2[&rel=1e-6&absCurrent=1e-15&absVoltage=1e-6&absProbe=1e-15&all=1&limit=N]
 * (workspace.read): text diff and results diff of two commits of one network.
 * A commit in a workspace the actor is not a member of is 404, like an unknown one.
 */
export function GET(request: Request) {
  return handle(async () => {
    const q = parseInput(Query, queryOf(request));
    const actor = await requestActor(request);
    const { commit: a, network } = commitAccess(actor, "workspace.read", q.from);
    // The newer commit is checked on its own, so a commit of a workspace the actor is not in stays a 404.
    const { commit: b } = commitAccess(actor, "workspace.read", q.to);
    if (a.networkId !== b.networkId) throw new RequestError(422, "from and to must be commits of the same network");
    const tolerance = Object.fromEntries(
      Object.entries({ rel: q.rel, absCurrent: q.absCurrent, absVoltage: q.absVoltage, absProbe: q.absProbe }).filter(
        ([, v]) => v !== undefined,
      ),
    );
    const c = compareCommits(a.id, b.id, { tolerance, includeWithin: q.all === "1", limit: q.limit });
    return Response.json({ ...c, network: { id: network.id, slug: network.slug, name: network.name } });
  });
}
