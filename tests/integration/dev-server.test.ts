/**
 * `npm run dev` serves through Runnel's own HTTP layer (scripts/dev.ts →
 * scripts/lib/next-server.ts --dev), so a page in development carries the same
 * Content-Security-Policy (with the nonce on Next's own scripts), frame and
 * sniffing headers, and a cross-site form post is refused 403 as with `npm start`.
 * Next compiles the page on the first request: this test takes some seconds.
 */
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

let child: ChildProcess;
let base = "";
const dir = fs.mkdtempSync(path.join(os.tmpdir(), "runnel-dev-server-"));

async function freePort(): Promise<number> {
  const s = net.createServer();
  await new Promise<void>((r) => s.listen(0, "127.0.0.1", r));
  const port = (s.address() as net.AddressInfo).port;
  await new Promise((r) => s.close(r));
  return port;
}

beforeAll(async () => {
  const port = await freePort();
  base = `http://127.0.0.1:${port}`;
  child = spawn(process.execPath, ["node_modules/tsx/dist/cli.mjs", "scripts/dev.ts", "--port", String(port)], {
    env: {
      ...process.env,
      NODE_ENV: "production",
      RUNNEL_DB: path.join(dir, "runnel.db"),
      NEXT_TELEMETRY_DISABLED: "1",
    },
    stdio: ["ignore", "ignore", "inherit"],
  });
  for (let i = 0; ; i++) {
    try {
      if ((await fetch(`${base}/api/health`)).ok) return;
    } catch {
      // not listening yet
    }
    if (i > 2000) throw new Error("the development server did not start");
    await new Promise((r) => setTimeout(r, 100));
  }
}, 240_000);

afterAll(async () => {
  if (child.exitCode === null) {
    const gone = new Promise((r) => child.once("exit", r));
    child.kill("SIGTERM");
    await gone;
  }
  fs.rmSync(dir, { recursive: true, force: true });
});

describe("npm run dev", () => {
  it("gives a page its CSP nonce, which Next puts on its scripts, and the frame and sniffing headers", async () => {
    const res = await fetch(`${base}/signin`);
    expect(res.status).toBe(200);
    const policy = res.headers.get("content-security-policy") ?? "";
    const nonce = /'nonce-([^']+)'/.exec(policy)?.[1];
    expect(nonce).toBeTruthy();
    expect(policy).toContain("'strict-dynamic'");
    expect(policy).toContain("frame-ancestors 'none'");
    expect(policy).toContain("object-src 'none'");
    expect(res.headers.get("x-content-type-options")).toBe("nosniff");
    expect(res.headers.get("x-frame-options")).toBe("DENY");
    const html = await res.text();
    const scripts = [...html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
    expect(scripts.length).toBeGreaterThan(0);
    for (const tag of scripts) expect(tag).toContain(`nonce="${nonce}"`);
    // A second page load gets a nonce of its own.
    const again = (await fetch(`${base}/signin`)).headers.get("content-security-policy") ?? "";
    expect(/'nonce-([^']+)'/.exec(again)?.[1]).not.toBe(nonce);
  }, 240_000);

  it("answers API requests with the policy that allows nothing", async () => {
    const res = await fetch(`${base}/api/health`);
    expect(res.headers.get("content-security-policy")).toBe("default-src 'none'; frame-ancestors 'none'; sandbox");
  });

  it("refuses a form post to a page from another origin with 403", async () => {
    const res = await fetch(`${base}/signin`, {
      method: "POST",
      headers: { origin: "https://elsewhere.example", "content-type": "application/x-www-form-urlencoded" },
      body: "email=a%40b.example",
    });
    expect(res.status).toBe(403);
    expect(await res.text()).toContain("not sent from Runnel's own pages");
  });
});
