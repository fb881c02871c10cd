import net from "node:net";
import { DatabaseSetupError } from "../../db";

/** Prints one line, `runnel: <what and where>`, and exits non-zero. */
export function fail(message: string, code = 1): never {
  process.stderr.write(`runnel: ${message}\n`);
  process.exit(code);
}

/** Runs `main`, turning known setup errors into a one-line message and exit 1. */
export async function runScript(main: () => Promise<void> | void): Promise<void> {
  try {
    await main();
  } catch (e) {
    if (e instanceof DatabaseSetupError) fail(e.message);
    fail((e as Error).stack ?? String(e));
  }
}

/** Resolves when `port` on `host` can be bound; rejects with a one-line message otherwise. */
export function assertPortFree(host: string, port: number): Promise<void> {
  return new Promise((resolve, reject) => {
    const probe = net.createServer();
    probe.once("error", (e: NodeJS.ErrnoException) =>
      reject(
        new Error(
          e.code === "EADDRINUSE"
            ? `port ${port} on ${host} is already in use`
            : `cannot listen on ${host}:${port}: ${e.code}`,
        ),
      ),
    );
    probe.listen(port, host, () => probe.close(() => resolve()));
  });
}
