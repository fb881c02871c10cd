/**
 * Request bodies are read as streams and refused at the limit: an anonymous
 * request's body is never read, a signed-in one is cut off as soon as it
 * crosses the limit (413), with or without a Content-Length. The bodies here
 * are 64 MiB streams made on demand; the test counts how much of each the
 * handler pulled.
 */
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { MAX_BODY_BYTES } from "@/app/lib/http";
import { MAX_MEASUREMENT_BYTES } from "@/app/lib/review/measurements";
import { buildAccountsFixture, WORKSPACE, type AccountsFixture, type Who } from "../helpers/accounts";
import { SITE } from "../helpers/request-context";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

let fixture: AccountsFixture;
beforeAll(() => {
  fixture = buildAccountsFixture();
  fixture.useCopy();
});
afterAll(() => fixture.dispose());

const MiB = 1024 * 1024;
const CHUNK = 64 * 1024;

/** A stream of `total` bytes of `{"commit":"aaaa…` made one 64 KiB chunk per pull; `pulled` counts what was taken. */
function hugeBody(total: number) {
  const counter = { pulled: 0 };
  const chunk = new TextEncoder().encode("a".repeat(CHUNK));
  const stream = new ReadableStream<Uint8Array>({
    start(c) {
      c.enqueue(new TextEncoder().encode('{"commit":"'));
    },
    pull(c) {
      if (counter.pulled >= total) return c.close();
      counter.pulled += CHUNK;
      c.enqueue(chunk);
    },
  });
  return { stream, counter };
}

type Handler = (req: Request, ctx: { params: Promise<Record<string, string>> }) => Promise<Response>;

async function post(
  who: Who,
  file: string,
  url: string,
  params: Record<string, string>,
  headers: HeadersInit = {},
  method = "POST",
) {
  const { stream, counter } = hugeBody(64 * MiB);
  const mod = (await import(/* @vite-ignore */ `@/app/api/${file}`)) as Record<string, Handler>;
  const h = new Headers({ origin: SITE, host: new URL(SITE).host, "content-type": "application/json", ...headers });
  const actor = fixture.actors[who];
  if (actor) h.set("cookie", actor.cookie);
  const init = { method, headers: h, body: stream, duplex: "half" } as RequestInit;
  const res = await mod[method](new Request(SITE + url, init), { params: Promise.resolve(params) });
  return { status: res.status, body: (await res.json()) as { error: string }, pulled: counter.pulled };
}

/** Every route handler that takes a body (POST, PUT, PATCH), found on disk: [file, url, params, method]. */
function bodyRoutes(): [string, string, Record<string, string>, string][] {
  const out: [string, string, Record<string, string>, string][] = [];
  const walk = (dir: string) => {
    for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
      const p = path.join(dir, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.name === "route.ts") {
        const src = fs.readFileSync(p, "utf8");
        const rel = path.relative("app/api", p).replace(/\.ts$/, "");
        const params: Record<string, string> = {};
        const url =
          "/api/" +
          path
            .dirname(rel)
            .split(path.sep)
            .map((seg) => {
              const m = /^\[(\w+)\]$/.exec(seg);
              if (!m) return seg;
              params[m[1]] = m[1] === "slug" ? WORKSPACE.slug : `${m[1]}_x`;
              return params[m[1]];
            })
            .join("/");
        for (const method of ["POST", "PUT", "PATCH"])
          if (new RegExp(`export (async )?function ${method}\\b`).test(src)) out.push([rel, url, params, method]);
      }
    }
  };
  walk("app/api");
  return out.sort();
}
const ROUTES = bodyRoutes();

describe("request bodies", () => {
  it("finds the routes that take a body", () => {
    expect(ROUTES.map((r) => r[0])).toEqual(
      expect.arrayContaining(["runs/route", "comments/preview/route", "runs/[id]/seek/route", "networks/[id]/route"]),
    );
  });

  it.each(ROUTES)(
    "an anonymous chunked 64 MiB request to %s is refused without reading its body",
    async (file, url, p, method) => {
      const r = await post("anonymous", file, url, p, {}, method);
      expect(r.status).toBe(401);
      expect(r.pulled).toBe(0);
    },
  );

  it("a signed-in chunked 64 MiB POST is cut off at the limit with 413", async () => {
    const r = await post("designer", "runs/route", "/api/runs", {});
    expect(r.status).toBe(413);
    expect(r.body.error).toBe("the body is larger than the limit of 6.0 MB");
    expect(r.pulled).toBeLessThanOrEqual(MAX_BODY_BYTES + 2 * CHUNK);
  });

  it("a declared Content-Length over the limit is refused before a byte is read", async () => {
    const r = await post("designer", "runs/route", "/api/runs", {}, { "content-length": String(64 * MiB) });
    expect(r.status).toBe(413);
    expect(r.body.error).toBe("the body is 64.0 MB; the limit is 6.0 MB");
    expect(r.pulled).toBe(0);
  });

  it("a multipart upload over the measurement limit is cut off at the limit", async () => {
    const { createNetwork } = await import("@/app/lib/networks");
    const network = createNetwork({
      workspaceId: WORKSPACE.id,
      name: "Bench row",
      authorId: fixture.actors.designer!.userId,
    }).network.id;
    const r = await post(
      "designer",
      "networks/[id]/measurements/route",
      `/api/networks/${network}/measurements`,
      { id: network },
      { "content-type": "multipart/form-data; boundary=xyz" },
    );
    expect(r.status).toBe(413);
    expect(r.body.error).toBe("the upload is larger than the limit of 10.1 MB");
    expect(r.pulled).toBeLessThanOrEqual(MAX_MEASUREMENT_BYTES + 64 * 1024 + 2 * CHUNK);
  });
});
