/**
 * scripts/lib/static-brotli.ts: the build's static files go out brotli-compressed when a browser accepts it and a
 * `.br` file was written (scripts/precompress.mjs); everything else is left to Next, and no path leaves the
 * static folder. The answer decodes to the original bytes (node:zlib as the reference decoder).
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import http from "node:http";
import os from "node:os";
import path from "node:path";
import zlib from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { acceptsBrotli, serveBrotli } from "@/scripts/lib/static-brotli";

let dir: string;
let server: http.Server;
let base: string;
const script = "const answer = 42; ".repeat(200);

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "runnel-br-"));
  const staticDir = path.join(dir, "static");
  fs.mkdirSync(path.join(staticDir, "chunks"), { recursive: true });
  fs.writeFileSync(path.join(staticDir, "chunks", "app.js"), script);
  fs.writeFileSync(path.join(staticDir, "chunks", "tiny.js"), "1");
  fs.writeFileSync(path.join(dir, "secret.js"), "secret ".repeat(400));
  fs.writeFileSync(path.join(dir, "secret.js.br"), zlib.brotliCompressSync("secret"));
  execFileSync(process.execPath, ["scripts/precompress.mjs", staticDir]);
  server = http.createServer((req, res) => {
    if (serveBrotli(req, res, staticDir)) return;
    res.writeHead(299, { "content-type": "text/plain" });
    res.end("left to Next");
  });
  await new Promise<void>((r) => server.listen(0, "127.0.0.1", r));
  base = `http://127.0.0.1:${(server.address() as { port: number }).port}`;
});

afterAll(() => {
  server.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

function get(
  url: string,
  encoding?: string,
): Promise<{ status: number; headers: http.IncomingHttpHeaders; body: Buffer }> {
  return new Promise((resolve, reject) => {
    http
      .get(base + url, { headers: encoding === undefined ? {} : { "accept-encoding": encoding } }, (res) => {
        const parts: Buffer[] = [];
        res.on("data", (c: Buffer) => parts.push(c));
        res.on("end", () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(parts) }));
      })
      .on("error", reject);
  });
}

describe("precompressed static files", () => {
  it("sends the .br file to a browser that accepts brotli, with the type, caching and security headers", async () => {
    const r = await get("/_next/static/chunks/app.js", "gzip, deflate, br, zstd");
    expect(r.status).toBe(200);
    expect(r.headers["content-encoding"]).toBe("br");
    expect(r.headers["content-type"]).toMatch(/^application\/javascript/);
    expect(r.headers["cache-control"]).toContain("immutable");
    expect(r.headers["vary"]).toBe("Accept-Encoding");
    expect(r.headers["x-content-type-options"]).toBe("nosniff");
    expect(r.body.length).toBeLessThan(script.length / 10);
    expect(zlib.brotliDecompressSync(r.body).toString()).toBe(script);
  });

  it("leaves to Next a browser without brotli, a small file never compressed, and paths outside the folder", async () => {
    expect((await get("/_next/static/chunks/app.js", "gzip")).status).toBe(299);
    expect((await get("/_next/static/chunks/app.js", "br;q=0, gzip")).status).toBe(299);
    expect((await get("/_next/static/chunks/app.js")).status).toBe(299);
    expect((await get("/_next/static/chunks/tiny.js", "br")).status).toBe(299);
    expect((await get("/_next/static/../secret.js", "br")).status).toBe(299);
    expect((await get("/_next/static/%2e%2e/secret.js", "br")).status).toBe(299);
    expect((await get("/_next/static/chunks/%2e%2e%2f%2e%2e%2fsecret.js", "br")).status).toBe(299);
    expect((await get("/_next/static/chunks/nope.js", "br")).status).toBe(299);
    expect((await get("/_next/static/%E0%A4%A.js", "br")).status).toBe(299);
  });

  it("reads Accept-Encoding as the standard says", () => {
    expect(acceptsBrotli("gzip, deflate, br")).toBe(true);
    expect(acceptsBrotli("BR;q=0.5")).toBe(true);
    expect(acceptsBrotli("br;q=0")).toBe(false);
    expect(acceptsBrotli("brotli, gzip")).toBe(false);
    expect(acceptsBrotli(undefined)).toBe(false);
  });
});
