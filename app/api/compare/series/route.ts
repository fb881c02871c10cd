import { z } from "zod";
import { commitPairAccess, requestActor } from "@/app/lib/access";
import { plotPrecision, roundTo } from "@/app/lib/format";
import { handle, parseInput, queryOf, RequestError } from "@/app/lib/http";
import { comparisonSeries, prepareComparisons } from "@/app/lib/review/compare-data";

export const dynamic = "force-dynamic";

const Query = z.object({
  from: z.string().min(1, "name the older commit"),
  to: z.string().min(1, "name the newer commit"),
  analysis: z.string().min(1, "name the analysis"),
  grid: z.coerce.number().int().min(0).max(20_000).optional(),
  probes: z.string().max(20_000, "name at most 20,000 characters of probes").optional(),
});

/**
 * GET /api/compare/series?from=C1&to=C2&analysis=A[&grid=G][&probes=a,b] (workspace.read):
 * both runs' probe values at every point (the overlay plots), the relative
 * change per matched point, and for Monte Carlo runs the distributions of the
 * samples at grid point G with the two-sample Kolmogorov–Smirnov test; only
 * for the probes named in `probes` (comma-separated) when given, every probe
 * otherwise. `names` lists every probe either way.
 */
export function GET(request: Request) {
  return handle(async () => {
    const q = parseInput(Query, queryOf(request));
    const { from, to } = commitPairAccess(await requestActor(request), "workspace.read", q.from, q.to);
    await prepareComparisons(from.id, to.id);
    const s = comparisonSeries(
      from.id,
      to.id,
      q.analysis,
      q.grid ?? 0,
      undefined,
      q.probes === undefined ? undefined : q.probes.split(",").filter(Boolean),
    );
    if (!s) throw new RequestError(404, `"${q.analysis}" has no finished run in both commits`);
    // Values for plots and their legends (4 significant digits shown): 7 are sent, not 17 (about half the bytes).
    // The relative change is only drawn, in per cent, beneath the curves (the summaries' largest relative change
    // is computed from full values on the server): 4 digits (a sweep pair's first visit sends 6 kB less).
    const sent = { ...s, relative: s.relative.map((r) => r.map((v) => (v === null ? null : roundTo(v, 4)))) };
    return new Response(JSON.stringify(sent, plotPrecision), { headers: { "content-type": "application/json" } });
  });
}
