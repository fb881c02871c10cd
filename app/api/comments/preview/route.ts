import { z } from "zod";
import { commitAccess, requestActor, threadAccess } from "@/app/lib/access";
import { handle, readJson, RequestError } from "@/app/lib/http";
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
    const input = await readJson(request, Body);
    if (!input.threadId && !input.commitId) throw new RequestError(400, "threadId: name the thread (or commitId)");
    const actor = await requestActor(request);
    const { actor: a, workspaceId } = input.threadId
      ? (({ actor, thread }) => ({ actor, workspaceId: thread.workspaceId }))(
          threadAccess(actor, "thread.comment", input.threadId),
        )
      : (({ actor, network }) => ({ actor, workspaceId: network.workspaceId }))(
          commitAccess(actor, "thread.comment", input.commitId!),
        );
    return Response.json(previewComment(workspaceId, input.body, a.userId));
  });
}
