import { z } from "zod";
import { commitAccess, networkAccess, requestActor } from "@/app/lib/access";
import { publicBaseUrl } from "@/app/lib/auth";
import { handle, parseInput, queryOf, readJson } from "@/app/lib/http";
import { authenticated } from "@/app/lib/policy";
import { sendMail } from "@/app/lib/mail";
import { createThread, listThreads, MAX_COMMENT_LENGTH, MAX_TITLE_LENGTH } from "@/app/lib/review/threads";

export const dynamic = "force-dynamic";

const Body = z.object({
  commitId: z.string().min(1),
  runId: z.string().min(1).nullish(),
  title: z.string().max(MAX_TITLE_LENGTH),
  body: z.string().max(MAX_COMMENT_LENGTH),
});

/** POST /api/threads {commitId, runId?, title, body} (thread.comment): opens a thread on a commit; 201 with its permalink. */
export function POST(request: Request) {
  return handle(async () => {
    // Signed in before the body is read: an anonymous request's body is never read.
    const signedIn = authenticated(await requestActor(request));
    const input = await readJson(request, Body);
    const { actor } = commitAccess(signedIn, "thread.comment", input.commitId);
    const r = await createThread(
      { ...input, authorId: actor.userId, baseUrl: publicBaseUrl(request.headers) },
      sendMail,
    );
    return Response.json(
      { thread: r.thread, commentId: r.commentId, notified: r.notified, url: `/threads/${r.thread.id}` },
      { status: 201 },
    );
  });
}

const Query = z.object({ networkId: z.string().min(1), commitId: z.string().min(1).optional() });

/** GET /api/threads?networkId=N[&commitId=C] (workspace.read): the threads of a network or one of its commits. */
export function GET(request: Request) {
  return handle(async () => {
    const q = parseInput(Query, queryOf(request));
    networkAccess(await requestActor(request), "workspace.read", q.networkId);
    return Response.json({ threads: listThreads(q) });
  });
}
