/**
 * Runnel's HTTP server: Next's request handler behind a thin node:http layer
 * that does what Next cannot be told to do. `startNext` (./server.ts) runs it
 * as `node --import tsx scripts/lib/next-server.ts HOST PORT [--dev]`: the
 * production build (`npm start`, the demo), or with `--dev` Next's development
 * server (`npm run dev`) behind the same layer, so the headers below are the
 * same in both (the development policy adds only what Next's dev client needs:
 * `eval` for its error overlay and a WebSocket for hot reload).
 * - Every request carries the connection's peer address in
 *   `x-runnel-socket-address` (a client's own header of that name is dropped),
 *   so rate limits never depend on a header the client wrote
 *   (app/lib/request-edge.ts `clientAddress`).
 * - Every page gets a fresh script nonce and its Content-Security-Policy, on
 *   the request (Next reads the nonce from there and puts it on its scripts)
 *   and on the response; other answers get a policy that allows nothing.
 * - A form post or server-action call to a page from another origin is
 *   answered 403 here (Next would answer it 500).
 * - The build's static scripts and stylesheets go out brotli-compressed from
 *   files written at build time (./static-brotli.ts); Next sends the rest.
 */
import { randomBytes } from "node:crypto";
import http from "node:http";
import path from "node:path";
import next from "next";
import {
  contentSecurityPolicy,
  NON_PAGE_POLICY,
  originAllowed,
  SOCKET_ADDRESS_HEADER,
} from "../../app/lib/request-edge";
import { collectWhenQuiet } from "../../app/lib/worker-memory";
import { serveBrotli } from "./static-brotli";

const args = process.argv.slice(2);
const dev = args.includes("--dev");
const [host = "127.0.0.1", portText = "3000"] = args.filter((a) => a !== "--dev");
const port = Number(portText);

/** Static build output, images and API answers are not pages. */
function isPage(pathname: string): boolean {
  return !/^\/(api|_next)\//.test(pathname) && !/\.(ico|svg|png|txt|xml|webmanifest)$/.test(pathname);
}

function headersOf(req: http.IncomingMessage): Headers {
  const h = new Headers();
  for (const [k, v] of Object.entries(req.headers)) {
    if (typeof v === "string") h.set(k, v);
    else if (Array.isArray(v)) h.set(k, v.join(", "));
  }
  return h;
}

const app = next({ dev, hostname: host, port, dir: process.cwd() });
await app.prepare();
const handle = app.getRequestHandler();

const staticDir = path.join(process.cwd(), ".next", "static");

const server = http.createServer((req, res) => {
  // the build's scripts and stylesheets, brotli-compressed ahead of time (./static-brotli.ts)
  if (!dev && serveBrotli(req, res, staticDir)) return;
  delete req.headers[SOCKET_ADDRESS_HEADER];
  req.headers[SOCKET_ADDRESS_HEADER] = req.socket.remoteAddress ?? "unknown";
  const pathname = (req.url ?? "/").split("?")[0];
  const method = (req.method ?? "GET").toUpperCase();
  if (isPage(pathname)) {
    if (!originAllowed(method, headersOf(req))) {
      res.writeHead(403, { "content-type": "text/plain; charset=utf-8", connection: "close" });
      res.end("403 Forbidden: this form was not sent from Runnel's own pages (its Origin does not match the Host).\n");
      req.resume();
      return;
    }
    const policy = contentSecurityPolicy(randomBytes(16).toString("base64"), dev);
    req.headers["content-security-policy"] = policy;
    res.setHeader("Content-Security-Policy", policy);
  } else if (pathname.startsWith("/api/")) {
    res.setHeader("Content-Security-Policy", NON_PAGE_POLICY);
  }
  void handle(req, res);
});
// the request thread gives a large answer's memory back once the server is quiet (app/lib/worker-memory.ts)
collectWhenQuiet(server);
server.listen(port, host, () => console.log(`runnel: serving http://${host}:${port}/${dev ? " (development)" : ""}`));
const stop = () => {
  server.close(() => process.exit(0));
  server.closeIdleConnections();
  setTimeout(() => process.exit(0), 3000).unref();
};
process.on("SIGTERM", stop);
process.on("SIGINT", stop);
