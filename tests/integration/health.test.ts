import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/db";
import pkg from "@/package.json";
import { freshDatabase } from "../helpers/db";

describe("GET /api/health", () => {
  let dispose: () => void;
  beforeAll(() => {
    const t = freshDatabase();
    dispose = t.dispose;
    process.env.RILL_DB = t.file;
  });
  afterAll(() => {
    closeDb();
    dispose();
    delete process.env.RILL_DB;
  });

  it("reports the version and that the database answers", async () => {
    const { GET } = await import("@/app/api/health/route");
    const res = GET();
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ app: "rill", version: pkg.version, db: "ok" });
  });
});
