import { z } from "zod";
import { commitAccess, networkAccess, requestActor } from "@/app/lib/access";
import { authenticated } from "@/app/lib/policy";
import { fresh, handle, parseInput, queryOf, readJson } from "@/app/lib/http";
import { MAX_TIME_LIMIT_MS, startRun } from "@/app/lib/run-supervisor";
import { listRuns } from "@/app/lib/runs";

export const dynamic = "force-dynamic";

const RunsQuery = z.union([z.object({ commit: z.string().min(1) }), z.object({ network: z.string().min(1) })]);

/** GET /api/runs?commit=ID or ?network=ID (workspace.read): runs, newest first. */
export function GET(request: Request) {
  return handle(async () => {
    const q = parseInput(RunsQuery, queryOf(request));
    const actor = await requestActor(request);
    if ("commit" in q) {
      const { commit } = commitAccess(actor, "workspace.read", q.commit);
      return fresh({ runs: listRuns({ commitId: commit.id }) });
    }
    const { network } = networkAccess(actor, "workspace.read", q.network);
    return fresh({ runs: listRuns({ networkId: network.id }) });
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
    // Signed in before the body is read: an anonymous request's body is never read.
    const signedIn = authenticated(await requestActor(request));
    const input = await readJson(request, StartRun);
    const { actor, commit } = commitAccess(signedIn, "run.start", input.commit);
    const run = await startRun({
      commitId: commit.id,
      actorId: actor.userId,
      timeLimitMs: input.timeLimitSeconds === undefined ? undefined : Math.round(input.timeLimitSeconds * 1000),
      fault: process.env.RUNNEL_TEST_FAULTS === "1" ? input.fault : undefined,
      signal: request.signal,
    });
    return fresh({ run }, { status: 201 });
  });
}
