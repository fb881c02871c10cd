import os from "node:os";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { databasePath, migrationsFolder } from "@/db";

describe("database location", () => {
  const saved = process.env.RUNNEL_DB;
  afterEach(() => {
    if (saved === undefined) delete process.env.RUNNEL_DB;
    else process.env.RUNNEL_DB = saved;
  });

  it("defaults to data/runnel.db under the working directory", () => {
    delete process.env.RUNNEL_DB;
    expect(databasePath()).toBe(path.resolve("data", "runnel.db"));
  });

  it("is overridden by RUNNEL_DB", () => {
    const elsewhere = path.join(os.tmpdir(), "elsewhere", "x.db");
    process.env.RUNNEL_DB = elsewhere;
    expect(databasePath()).toBe(elsewhere);
  });

  it("reads migrations from migrations/", () => {
    expect(migrationsFolder()).toBe(path.resolve("migrations"));
  });
});
