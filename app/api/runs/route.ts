import { z } from "zod";
import { guard } from "@/app/lib/guard";
import { fresh, handle, parseInput, queryOf, readJson } from "@/app/lib/http";
import { getCommit, getNetwork } from "@/app/lib/networks";
import { MAX_TIME_LIMIT_MS, startRun } from "@/app/lib/run-supervisor";
import { listRuns } from "@/app/lib/runs";

export const dynamic = "force-dynamic";

const RunsQuery = z.union([z.object({ commit: z.string().min(1) }), z.object({ network: z.string().min(1) })]);

/** GET /api/runs?commit=ID or ?network=ID (workspace.read): runs, newest first. */
export function GET(request: Request) {
  return handle(async () => {
    const q = parseInput(RunsQuery, queryOf(request));
    const networkId = "commit" in q ? getCommit(q.commit)?.networkId : q.network;
    const n = networkId ? getNetwork(networkId) : null;
    await guard(request, "workspace.read", n?.workspaceId);
    const runs = "commit" in q ? listRuns({ commitId: q.commit }) : listRuns({ networkId: n!.id });
    return fresh({ runs });
  });
}

const StartRun = z.object({
  commit: z.string().min(1),
  timeLimitSeconds: z
    .number()
    .positive()
    .max(MAX_TIME_LIMIT_MS / 1000)
    .optional(),
  fault: z.enum(["throw", "slow", "stuck"]).optional(),
});

/**
 * POST /api/runs (run.start): queue a run of every analysis of a commit.
 * 422 when the commit has errors, or the run exceeds the points or values limits (with the numbers).
 */
export function POST(request: Request) {
  return handle(async () => {
    const input = await readJson(request, StartRun);
    const c = getCommit(input.commit);
    const n = c ? getNetwork(c.networkId) : null;
    const { actor } = await guard(request, "run.start", n?.workspaceId);
    const run = startRun({
      commitId: c!.id,
      actorId: actor.userId,
      timeLimitMs: input.timeLimitSeconds === undefined ? undefined : Math.round(input.timeLimitSeconds * 1000),
      fault: process.env.RUNNEL_TEST_FAULTS === "1" ? input.fault : undefined,
    });
    return fresh({ run }, { status: 201 });
  });
}
