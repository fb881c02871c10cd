/**
 * A plain HTTP server in the test process that hands requests to the app's
 * route handlers (Request in, Response out), for clients in other processes
 * (queue workers) without a Next build.
 */
import http from "node:http";
import type { AddressInfo } from "node:net";

type Handler = (req: Request, ctx: { params: Promise<Record<string, string>> }) => Promise<Response>;

export interface Route {
  /** e.g. "/api/worker/chunks/[run]/[chunk]/points" */
  path: string;
  /** The handler module under app/api/, e.g. "worker/chunks/[run]/[chunk]/points/route". */
  file: string;
}

export async function startRouteServer(routes: Route[]): Promise<{ url: string; close(): Promise<void> }> {
  const table = routes.map((r) => {
    const names: string[] = [];
    const re = new RegExp(
      "^" + r.path.replace(/\[(\w+)\]/g, (_, n: string) => (names.push(n), "([^/]+)")).replace(/\//g, "\\/") + "$",
    );
    return { re, names, file: r.file };
  });
  const server = http.createServer((req, res) => {
    void (async () => {
      try {
        const url = new URL(req.url ?? "/", "http://127.0.0.1");
        const hit = table.map((t) => ({ t, m: t.re.exec(url.pathname) })).find((x) => x.m);
        if (!hit) {
          res.writeHead(404).end();
          return;
        }
        const params: Record<string, string> = {};
        hit.t.names.forEach((n, i) => (params[n] = decodeURIComponent(hit.m![i + 1])));
        const chunks: Buffer[] = [];
        for await (const c of req) chunks.push(c as Buffer);
        const body = chunks.length ? Buffer.concat(chunks) : undefined;
        const headers = new Headers();
        for (const [k, v] of Object.entries(req.headers)) if (typeof v === "string") headers.set(k, v);
        const mod = (await import(/* @vite-ignore */ `@/app/api/${hit.t.file}`)) as Record<string, Handler>;
        const handler = mod[req.method ?? "GET"];
        if (!handler) {
          res.writeHead(405).end();
          return;
        }
        const response = await handler(
          new Request(url.href, { method: req.method, headers, body: body && req.method !== "GET" ? body : undefined }),
          { params: Promise.resolve(params) },
        );
        res.writeHead(response.status, Object.fromEntries(response.headers));
        res.end(Buffer.from(await response.arrayBuffer()));
      } catch (e) {
        res.writeHead(500).end(String(e));
      }
    })();
  });
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const port = (server.address() as AddressInfo).port;
  return {
    url: `http://127.0.0.1:${port}`,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}

/** The worker API's routes. */
export const WORKER_ROUTES: Route[] = [
  { path: "/api/worker/hello", file: "worker/hello/route" },
  { path: "/api/worker/claims", file: "worker/claims/route" },
  { path: "/api/worker/commits/[id]", file: "worker/commits/[id]/route" },
  { path: "/api/worker/chunks/[run]/[chunk]/points", file: "worker/chunks/[run]/[chunk]/points/route" },
  { path: "/api/worker/chunks/[run]/[chunk]/end", file: "worker/chunks/[run]/[chunk]/end/route" },
];
