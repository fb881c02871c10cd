import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/db";
import pkg from "@/package.json";
import { freshDatabase } from "../helpers/db";

describe("GET /api/health", () => {
  let dispose: () => void;
  beforeAll(() => {
    const t = freshDatabase();
    dispose = t.dispose;
    process.env.RUNNEL_DB = t.file;
  });
  afterAll(() => {
    closeDb();
    dispose();
    delete process.env.RUNNEL_DB;
  });

  it("reports the version and that the database answers", async () => {
    const { GET } = await import("@/app/api/health/route");
    const res = GET();
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ app: "runnel", version: pkg.version, db: "ok" });
  });
});
