import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import { databasePath, openDatabase } from "../../db";
import { allocatorEnv } from "./allocator-env";
import { assertPortFree, fail } from "./fail";

export interface ServeOptions {
  host: string;
  port: number;
  env?: Record<string, string>;
  /** Next's development server (compiles on request, hot reload) instead of the production build. */
  dev?: boolean;
}

/** Parses `--port N` / `--host H` (defaults: $PORT or 3000, 127.0.0.1). */
export function serveOptions(argv: string[]): ServeOptions {
  let port = process.env.PORT ?? "3000";
  let host = "127.0.0.1";
  for (let i = 0; i < argv.length; i++) {
    if (argv[i] === "--port") port = argv[++i] ?? "";
    else if (argv[i] === "--host") host = argv[++i] ?? "";
    else fail(`unknown option ${argv[i]} (expected --port N or --host H)`, 2);
  }
  const n = Number(port);
  if (!Number.isInteger(n) || n <= 0 || n > 65535) fail(`port ${JSON.stringify(port)} is not a port number`, 2);
  return { host, port: n };
}

/**
 * Checks the build, the database (migrating it) and the port, then runs
 * Runnel's server (./next-server.ts: Next's handler plus the client's socket
 * address and the pages' Content-Security-Policy) in a child process that ends with this one.
 */
export async function startNext(options: ServeOptions): Promise<ChildProcess> {
  if (!options.dev && !fs.existsSync(".next/BUILD_ID")) fail("no build found in .next/: run `npm run build` first");
  const file = databasePath();
  openDatabase(file).$client.close();
  await assertPortFree(options.host, options.port).catch((e: Error) => fail(e.message));
  const child = spawn(
    process.execPath,
    [
      "--import",
      "tsx",
      "scripts/lib/next-server.ts",
      options.host,
      String(options.port),
      ...(options.dev ? ["--dev"] : []),
    ],
    {
      stdio: "inherit",
      env: {
        ...allocatorEnv(),
        ...process.env,
        ...(options.dev ? { NODE_ENV: "development" } : {}),
        ...options.env,
        RUNNEL_DB: file,
        RUNNEL_LISTEN_HOST: options.host,
        NEXT_TELEMETRY_DISABLED: "1",
      },
    },
  );
  const stop = () => child.kill("SIGTERM");
  process.on("SIGINT", stop);
  process.on("SIGTERM", stop);
  child.on("exit", (code, signal) => process.exit(code ?? (signal ? 1 : 0)));
  return child;
}
