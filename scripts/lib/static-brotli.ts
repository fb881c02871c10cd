/**
 * The build's static files (`/_next/static/…`: scripts, stylesheets) sent brotli-compressed when the browser
 * accepts it. `scripts/precompress.mjs` writes `FILE.br` beside each one after `next build` (quality 11, once);
 * this layer of scripts/lib/next-server.ts answers with it. Next itself compresses with gzip only, on every
 * request: brotli's files are 15–20 % smaller (the compare page's first visit: 188 kB of scripts), and nothing
 * is compressed per request. Anything else (no `.br` file, a browser that does not accept brotli, a path that
 * leaves the static folder) is left to Next.
 */
import fs from "node:fs";
import type http from "node:http";
import path from "node:path";
import { SECURITY_HEADERS } from "../../app/lib/security-headers";

const TYPES: Record<string, string> = {
  ".js": "application/javascript; charset=UTF-8",
  ".css": "text/css; charset=UTF-8",
  ".json": "application/json; charset=UTF-8",
  ".svg": "image/svg+xml",
  ".txt": "text/plain; charset=UTF-8",
  ".map": "application/json; charset=UTF-8",
};

/** The extensions `scripts/precompress.mjs` compresses. */
export const PRECOMPRESSED = Object.keys(TYPES);

/** Whether an Accept-Encoding header accepts brotli (`br`, not `br;q=0`). */
export function acceptsBrotli(header: string | string[] | undefined): boolean {
  const value = Array.isArray(header) ? header.join(",") : (header ?? "");
  return value.split(",").some((part) => {
    const [coding, ...params] = part.trim().toLowerCase().split(";");
    if (coding.trim() !== "br") return false;
    const q = params.map((p) => p.trim()).find((p) => p.startsWith("q="));
    return q === undefined || Number(q.slice(2)) > 0;
  });
}

/**
 * Answers `req` from the precompressed file when there is one and the browser takes it; false (nothing sent)
 * otherwise. `staticDir` is the build's `.next/static`.
 */
export function serveBrotli(req: http.IncomingMessage, res: http.ServerResponse, staticDir: string): boolean {
  const method = req.method ?? "GET";
  if (method !== "GET" && method !== "HEAD") return false;
  const pathname = (req.url ?? "/").split("?")[0];
  if (!pathname.startsWith("/_next/static/") || !acceptsBrotli(req.headers["accept-encoding"])) return false;
  let rel: string;
  try {
    rel = decodeURIComponent(pathname.slice("/_next/static/".length));
  } catch {
    return false;
  }
  const type = TYPES[path.extname(rel)];
  const file = path.resolve(staticDir, rel);
  if (!type || rel.includes("\0") || !file.startsWith(path.resolve(staticDir) + path.sep)) return false;
  let size: number;
  try {
    const st = fs.statSync(file + ".br");
    if (!st.isFile()) return false;
    size = st.size;
  } catch {
    return false;
  }
  res.writeHead(200, {
    ...Object.fromEntries(SECURITY_HEADERS.map((h) => [h.key, h.value])),
    "content-type": type,
    "content-encoding": "br",
    "content-length": String(size),
    vary: "Accept-Encoding",
    // the file's name holds its content's hash, as Next names them
    "cache-control": "public, max-age=31536000, immutable",
  });
  if (method === "HEAD") res.end();
  else
    fs.createReadStream(file + ".br")
      .on("error", () => res.destroy())
      .pipe(res);
  return true;
}
