import { z } from "zod";
import { requestActor, threadAccess } from "@/app/lib/access";
import { publicBaseUrl } from "@/app/lib/auth";
import { handle, readJson } from "@/app/lib/http";
import { sendMail } from "@/app/lib/mail";
import { authenticated, authorize } from "@/app/lib/policy";
import { addComment, MAX_COMMENT_LENGTH } from "@/app/lib/review/threads";
import { REVIEW_ENTRIES } from "@/db/schema";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

const Body = z.object({
  body: z.string().max(MAX_COMMENT_LENGTH),
  verdict: z.enum(REVIEW_ENTRIES).nullish(),
  commitId: z.string().min(1).nullish(),
});

/**
 * POST /api/threads/[id]/comments {body, verdict?} (thread.comment; with a
 * verdict — "signed_off", "rework", or "withdrawn" to take one's own back — also
 * commit.signoff): adds a comment, writes the inbox items and sends the mention
 * e-mails; 409 when there is no verdict to withdraw. `commitId` names the commit the
 * verdict is about (default the thread's; a later fix of the same network). 201.
 */
export function POST(request: Request, ctx: Ctx) {
  return handle(async () => {
    // Signed in before the body is read: an anonymous request's body is never read.
    const signedIn = authenticated(await requestActor(request));
    const input = await readJson(request, Body);
    const { actor, thread } = threadAccess(signedIn, "thread.comment", (await ctx.params).id);
    if (input.verdict) authorize(actor, "commit.signoff", thread.workspaceId);
    const r = await addComment(
      {
        threadId: thread.id,
        body: input.body,
        verdict: input.verdict ?? null,
        verdictCommitId: input.commitId ?? null,
        authorId: actor.userId,
        baseUrl: publicBaseUrl(request.headers),
      },
      sendMail,
    );
    return Response.json(r, { status: 201 });
  });
}
