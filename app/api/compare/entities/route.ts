import { z } from "zod";
import { commitPairAccess, requestActor } from "@/app/lib/access";
import { handle, parseInput, queryOf, RequestError } from "@/app/lib/http";
import { comparisonPage, prepareComparisons } from "@/app/lib/review/compare-data";
import { toleranceOf, ToleranceQuery } from "@/app/lib/review/compare-query";

export const dynamic = "force-dynamic";

const Query = ToleranceQuery.extend({
  from: z.string().min(1, "name the older commit"),
  to: z.string().min(1, "name the newer commit"),
  analysis: z.string().min(1, "name the analysis"),
  kind: z.enum(["node", "device", "rail", "probe"]),
  quantity: z.enum(["voltage", "current", "ic", "value"]),
  page: z.coerce.number().int().min(0).max(10_000_000).optional(),
  size: z.coerce.number().int().min(1).max(500).optional(),
  sort: z.enum(["abs", "rel", "beyond", "name"]).optional(),
  only: z.enum(["0", "1"]).optional(),
  filter: z.string().max(100).optional(),
});

/**
 * GET /api/compare/entities?from=C1&to=C2&analysis=A&kind=node&quantity=voltage[&page=0&size=50&sort=abs&only=1&filter=x]
 * (workspace.read): one page of a kind's entities of one analysis, sorted on
 * the server by |Δ| (default), |relative Δ|, count beyond tolerance or name.
 */
export function GET(request: Request) {
  return handle(async () => {
    const q = parseInput(Query, queryOf(request));
    const { from, to } = commitPairAccess(await requestActor(request), "workspace.read", q.from, q.to);
    await prepareComparisons(from.id, to.id, toleranceOf(q));
    const page = comparisonPage(from.id, to.id, q.analysis, q.kind, q.quantity, {
      page: q.page,
      size: q.size,
      sort: q.sort,
      only: q.only === "1",
      filter: q.filter,
      tolerance: toleranceOf(q),
    });
    if (!page)
      throw new RequestError(404, `no ${q.kind} ${q.quantity} values of "${q.analysis}" in both commits' runs`);
    return Response.json(page);
  });
}
