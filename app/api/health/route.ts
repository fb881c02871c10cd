import { sql } from "drizzle-orm";
import { db } from "@/db";
import { APP_VERSION } from "@/app/lib/version";

export const dynamic = "force-dynamic";

/** GET /api/health: the app's version and whether the database answers. Public, reads nothing private. */
export function GET() {
  let dbState: "ok" | "error" = "ok";
  let detail: string | undefined;
  try {
    db().get(sql`select 1`);
  } catch (e) {
    dbState = "error";
    detail = (e as Error).message.split("\n")[0];
  }
  return Response.json(
    { app: "runnel", version: APP_VERSION, db: dbState, ...(detail ? { detail } : {}) },
    { status: dbState === "ok" ? 200 : 503, headers: { "cache-control": "no-store" } },
  );
}
