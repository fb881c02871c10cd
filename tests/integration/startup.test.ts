import { spawnSync } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { assertPortFree } from "@/scripts/lib/fail";

const cleanups: (() => void)[] = [];
afterEach(() => cleanups.splice(0).forEach((f) => f()));

function script(file: string, env: Record<string, string>, args: string[] = []) {
  return spawnSync(process.execPath, ["node_modules/tsx/dist/cli.mjs", file, ...args], {
    env: { ...process.env, ...env },
    encoding: "utf8",
    timeout: 60_000,
  });
}

describe("start-up failures are one line and a non-zero exit", () => {
  it("names a port that is in use", async () => {
    const holder = net.createServer();
    await new Promise<void>((resolve) => holder.listen(0, "127.0.0.1", resolve));
    cleanups.push(() => holder.close());
    const port = (holder.address() as net.AddressInfo).port;
    await expect(assertPortFree("127.0.0.1", port)).rejects.toThrow(`port ${port} on 127.0.0.1 is already in use`);
  });

  it("accepts a free port", async () => {
    await expect(assertPortFree("127.0.0.1", 0)).resolves.toBeUndefined();
  });

  it("names an unusable database path (db:migrate)", () => {
    const file = path.join(os.tmpdir(), `runnel-notdir-${process.pid}`);
    fs.writeFileSync(file, "a file, not a folder");
    cleanups.push(() => fs.rmSync(file, { force: true }));
    const r = script("scripts/migrate.ts", { RUNNEL_DB: path.join(file, "runnel.db") });
    expect(r.status).toBe(1);
    expect(r.stderr.trim().split("\n")).toEqual([
      `runnel: database path ${path.join(file, "runnel.db")} is not usable: a parent is a file, not a folder`,
    ]);
  });

  it("rejects a port that is not a number (npm start)", () => {
    const r = script("scripts/serve.ts", {}, ["--port", "eighty"]);
    expect(r.status).toBe(2);
    expect(r.stderr.trim()).toBe('runnel: port "eighty" is not a port number');
  });
});
