import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { databasePath, migrationsFolder } from "@/db";

describe("database location", () => {
  const saved = process.env.RILL_DB;
  afterEach(() => {
    if (saved === undefined) delete process.env.RILL_DB;
    else process.env.RILL_DB = saved;
  });

  it("defaults to data/rill.db under the working directory", () => {
    delete process.env.RILL_DB;
    expect(databasePath()).toBe(path.resolve("data", "rill.db"));
  });

  it("is overridden by RILL_DB", () => {
    process.env.RILL_DB = "/tmp/elsewhere/x.db";
    expect(databasePath()).toBe("/tmp/elsewhere/x.db");
  });

  it("reads migrations from migrations/", () => {
    expect(migrationsFolder()).toBe(path.resolve("migrations"));
  });
});
