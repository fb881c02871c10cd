/**
 * What the API benchmarks share (bench/api-runs.ts, bench/api-stall.ts): a
 * fresh database in a temporary folder with the demo seed and an API token,
 * the production server (scripts/lib/next-server.ts, what `npm start` and the
 * demo run) on a port of their own, and small helpers over it.
 *
 * Extra node options for the server (profiling it, e.g. `--cpu-prof
 * --cpu-prof-dir=DIR`) go in $RUNNEL_BENCH_SERVER_NODE_ARGS, space-separated.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { allocatorEnv } from "../scripts/lib/allocator-env";

export interface BenchServer {
  base: string;
  /** The server process (its pid is Next's). */
  process: ChildProcess;
  /** `authorization` (designer1's API token) and JSON content type. */
  auth: { authorization: string; "content-type": string };
  /** A `cookie` header of a signed-in viewer (the pages' way in), when asked for. */
  cookie: string;
  /** A JSON request with the token; the answer's status and parsed body. */
  api<T>(method: string, url: string, body?: unknown): Promise<{ status: number; json: T }>;
  /** Polls a run until it has ended; its final state. */
  waitRun(id: string, everyMs?: number): Promise<string>;
  /** The server's resident memory in MB (Next and its worker threads). */
  rssMb(): number;
  /** The server's resident memory split: anonymous (heaps, native allocations) and file-backed, in MB, and its threads. */
  memory(): { rss: number; anon: number; file: number; threads: number };
}

export const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** Parses `--name N` from argv, or the default. */
export function numberOption(argv: string[], name: string, dflt: number): number {
  return argv.includes(name) ? Number(argv[argv.indexOf(name) + 1]) : dflt;
}

/**
 * Seeds a fresh database, starts the server on `port` and waits until /api/health answers. The server and the
 * temporary folder go when this process exits.
 */
export async function startBenchServer(
  what: string,
  port: number,
  options: { env?: Record<string, string>; viewerSession?: boolean } = {},
): Promise<BenchServer> {
  for (const need of [
    ".next/BUILD_ID",
    ".build/run-worker.mjs",
    ".build/interactive-worker.mjs",
    ".build/export-worker.mjs",
  ]) {
    if (!fs.existsSync(need)) {
      console.error(`${what}: ${need} is missing: run \`npm run build\` first`);
      process.exit(1);
    }
  }
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "runnel-bench-api-"));
  process.env.RUNNEL_DB = path.join(dir, "runnel.db");
  const { openDatabase, closeDb } = await import("../db/index");
  const { seedDemo } = await import("../scripts/seed/index");
  const { createApiToken } = await import("../app/lib/tokens");
  const { secretHash, newSecret } = await import("../app/lib/secrets");
  const { sessions } = await import("../db/schema");
  const seeded = openDatabase(process.env.RUNNEL_DB);
  seedDemo(seeded);
  let cookie = "";
  if (options.viewerSession) {
    const sessionId = newSecret();
    seeded
      .insert(sessions)
      .values({ id: secretHash(sessionId), userId: "u_viewer", expiresAt: Math.floor(Date.now() / 1000) + 86400 })
      .run();
    cookie = `runnel_session=${sessionId}`;
  }
  seeded.$client.close();
  const { token } = createApiToken("u_designer1", "bench");
  closeDb();

  const nodeArgs = (process.env.RUNNEL_BENCH_SERVER_NODE_ARGS ?? "").split(" ").filter(Boolean);
  const server = spawn(
    process.execPath,
    [...nodeArgs, "--import", "tsx", "scripts/lib/next-server.ts", "127.0.0.1", String(port)],
    {
      env: {
        ...allocatorEnv(),
        ...process.env,
        ...options.env,
        NODE_ENV: "production",
        NEXT_TELEMETRY_DISABLED: "1",
        RUNNEL_LISTEN_HOST: "127.0.0.1",
      },
      stdio: ["ignore", "ignore", "inherit"],
    },
  );
  process.on("exit", () => {
    server.kill("SIGTERM");
    fs.rmSync(dir, { recursive: true, force: true });
  });

  const base = `http://127.0.0.1:${port}`;
  const auth = { authorization: `Bearer ${token}`, "content-type": "application/json" };
  for (let i = 0; ; i++) {
    try {
      if ((await fetch(`${base}/api/health`)).ok) break;
    } catch {
      // not listening yet
    }
    if (i > 300) throw new Error(`${what}: the server did not start`);
    await pause(100);
  }

  async function api<T>(method: string, url: string, body?: unknown): Promise<{ status: number; json: T }> {
    const res = await fetch(base + url, {
      method,
      headers: auth,
      body: body === undefined ? undefined : JSON.stringify(body),
    });
    return { status: res.status, json: (await res.json()) as T };
  }
  return {
    base,
    process: server,
    auth,
    cookie,
    api,
    async waitRun(id, everyMs = 200) {
      for (;;) {
        const r = await api<{ run: { state: string } }>("GET", `/api/runs/${id}`);
        if (!["queued", "running"].includes(r.json.run.state)) return r.json.run.state;
        await pause(everyMs);
      }
    },
    rssMb() {
      const status = fs.readFileSync(`/proc/${server.pid}/status`, "utf8");
      return Number(/VmRSS:\s+(\d+)/.exec(status)![1]) / 1024;
    },
    memory() {
      const status = fs.readFileSync(`/proc/${server.pid}/status`, "utf8");
      const field = (name: string) => Number(new RegExp(`${name}:\\s+(\\d+)`).exec(status)?.[1] ?? NaN);
      return {
        rss: field("VmRSS") / 1024,
        anon: field("RssAnon") / 1024,
        file: field("RssFile") / 1024,
        threads: field("Threads"),
      };
    },
  };
}

/** The machine line every API benchmark prints: CPU, cores, node, and the load average (others' work inflates times). */
export function machineLine(): string {
  return `${os.cpus()[0]?.model ?? "?"}, ${os.availableParallelism()} cores, node ${process.version}; load average ${os
    .loadavg()
    .map((x) => x.toFixed(1))
    .join(" ")}`;
}
