import { databaseAnswers } from "@/db";
import { APP_VERSION } from "@/app/lib/version";

export const dynamic = "force-dynamic";

/** GET /api/health: the app's version and whether the database answers. Public, reads nothing private. */
export function GET() {
  const answer = databaseAnswers();
  return Response.json(
    {
      app: "runnel",
      version: APP_VERSION,
      db: answer.ok ? "ok" : "error",
      ...(answer.ok ? {} : { detail: answer.detail }),
    },
    { status: answer.ok ? 200 : 503, headers: { "cache-control": "no-store" } },
  );
}
