import { z } from "zod";
import { commitAccess, requestActor, threadAccess } from "@/app/lib/access";
import { handle, readJson, RequestError } from "@/app/lib/http";
import { authenticated } from "@/app/lib/policy";
import { previewComment } from "@/app/lib/review/threads";

export const dynamic = "force-dynamic";

const Body = z.object({
  threadId: z.string().min(1).nullish(),
  commitId: z.string().min(1).nullish(),
  // Longer bodies are previewed up to the limit, with a warning saying so.
  body: z.string().max(200_000),
});

/**
 * POST /api/comments/preview {threadId | commitId, body} (thread.comment): the
 * comment as it would be posted in the thread's (or the commit's) workspace:
 * safe HTML, the run cards, the members it notifies, and a warning for each
 * reference or mention that will stay plain text. Stores nothing.
 */
export function POST(request: Request) {
  return handle(async () => {
    // Signed in before the body is read (an anonymous request never makes the server hold its body).
    const actor = authenticated(await requestActor(request));
    const input = await readJson(request, Body);
    const { threadId, commitId } = input;
    let a: typeof actor;
    let workspaceId: string;
    if (threadId) {
      const { actor: who, thread } = threadAccess(actor, "thread.comment", threadId);
      [a, workspaceId] = [who, thread.workspaceId];
    } else if (commitId) {
      const { actor: who, network } = commitAccess(actor, "thread.comment", commitId);
      [a, workspaceId] = [who, network.workspaceId];
    } else throw new RequestError(400, "threadId: name the thread (or commitId)");
    return Response.json(previewComment(workspaceId, input.body, a.userId));
  });
}
