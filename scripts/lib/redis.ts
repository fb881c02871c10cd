/**
 * A private Redis for tests, the bench and `npm run demo -- --queue redis`:
 * Debian's `redis-server` on a free loopback port, with no persistence
 * (nothing written to disk), stopped by its process id.
 */
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";

export interface PrivateRedis {
  port: number;
  url: string;
  child: ChildProcess;
  /** Stops it (SIGTERM) and waits for the process to end. */
  stop(): Promise<void>;
}

/** The redis-server binary, or null when it is not installed. */
export function redisServerPath(): string | null {
  for (const p of [process.env.REDIS_SERVER, "/usr/bin/redis-server", "/usr/local/bin/redis-server"])
    if (p && fs.existsSync(p)) return p;
  const r = spawnSync("sh", ["-c", "command -v redis-server"], { encoding: "utf8" });
  return r.status === 0 && r.stdout.trim() ? r.stdout.trim() : null;
}

/** A port nobody listens on now (the kernel's choice). */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const port = (srv.address() as net.AddressInfo).port;
      srv.close(() => resolve(port));
    });
  });
}

function answersPing(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const s = net.connect(port, "127.0.0.1");
    const done = (ok: boolean) => {
      s.destroy();
      resolve(ok);
    };
    s.setTimeout(500, () => done(false));
    s.once("error", () => done(false));
    s.once("connect", () => s.write("PING\r\n"));
    s.once("data", (d) => done(d.toString().startsWith("+PONG")));
  });
}

/** Starts redis-server on `port` (a free one by default); resolves once it answers PING. */
export async function startRedis(options: { port?: number } = {}): Promise<PrivateRedis> {
  const bin = redisServerPath();
  if (!bin) throw new Error("redis-server is not installed (Debian: apt-get install redis-server)");
  const port = options.port ?? (await freePort());
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "runnel-redis-"));
  const child = spawn(
    bin,
    [
      "--port",
      String(port),
      "--bind",
      "127.0.0.1",
      "--save",
      "",
      "--appendonly",
      "no",
      "--dir",
      dir,
      "--daemonize",
      "no",
    ],
    { stdio: ["ignore", "pipe", "pipe"] },
  );
  let log = "";
  child.stdout?.on("data", (d) => (log = (log + d.toString()).slice(-2_000)));
  child.stderr?.on("data", (d) => (log = (log + d.toString()).slice(-2_000)));
  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  for (const end = Date.now() + 10_000; !(await answersPing(port));) {
    if (child.exitCode !== null || Date.now() > end) {
      child.kill("SIGKILL");
      throw new Error(`redis-server did not start on 127.0.0.1:${port}: ${log.trim().split("\n").pop() ?? ""}`);
    }
    await new Promise((f) => setTimeout(f, 20));
  }
  return {
    port,
    url: `redis://127.0.0.1:${port}`,
    child,
    async stop() {
      if (child.exitCode === null) child.kill("SIGTERM");
      await exited;
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}
