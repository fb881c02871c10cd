/**
 * Review route handlers with real credentials and the local SMTP sink:
 * mentions send exactly one message to the right member, verdicts follow the
 * roles, a thread's permalink is 404 for a non-member, bad CSVs name row and column.
 */
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { comments, threads } from "@/db/schema";
import { startMailSink, type MailSink, type ReceivedMail } from "@/scripts/lib/mail-sink";
import { buildAccountsFixture, WORKSPACE, type AccountsFixture } from "../helpers/accounts";
import { SITE } from "../helpers/request-context";
import { dividerHistory } from "../helpers/review-fixtures";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);

let fixture: AccountsFixture;
let sink: MailSink;
const inbox: ReceivedMail[] = [];

beforeAll(async () => {
  fixture = buildAccountsFixture();
  sink = await startMailSink({ onMessage: (m) => void inbox.push(m) });
  process.env.RUNNEL_MAIL_SINK_PORT = String(sink.port);
});
afterAll(async () => {
  fixture.dispose();
  await sink.close();
  delete process.env.RUNNEL_MAIL_SINK_PORT;
});

function request(
  who: "reviewer" | "designer" | "viewer" | "outsider",
  method: string,
  url: string,
  body?: unknown,
): Request {
  const headers = new Headers({ origin: SITE, host: new URL(SITE).host, cookie: fixture.actors[who]!.cookie });
  if (body !== undefined) headers.set("content-type", "application/json");
  return new Request(SITE + url, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) });
}

function setup() {
  const db = fixture.useCopy();
  const h = dividerHistory(db);
  db.insert(threads)
    .values({
      id: "t_r",
      workspaceId: WORKSPACE.id,
      networkId: h.network.id,
      commitId: h.second.id,
      title: "width",
      createdBy: "u_designer1",
    })
    .run();
  db.insert(comments)
    .values({ id: "c_r", threadId: "t_r", workspaceId: WORKSPACE.id, authorId: "u_designer1", body: "first" })
    .run();
  return h;
}
const ctx = (id: string) => ({ params: Promise.resolve({ id }) });

async function waitFor(n: number) {
  for (let i = 0; i < 100 && inbox.length < n; i++) await new Promise((r) => setTimeout(r, 20));
}

describe("review routes", () => {
  it("a mention sends exactly one mail, to the mentioned member", async () => {
    setup();
    inbox.length = 0;
    const { POST } = await import("@/app/api/threads/[id]/comments/route");
    const res = await POST(
      request("designer", "POST", "/api/threads/t_r/comments", {
        body: "@reviewer could you check? (@reviewer, twice) @nobody",
      }),
      ctx("t_r"),
    );
    expect(res.status).toBe(201);
    expect((await res.json()).notified).toEqual(["reviewer"]);
    await waitFor(1);
    await new Promise((r) => setTimeout(r, 200)); // a second message would have arrived by now
    expect(inbox).toHaveLength(1);
    expect(inbox[0].recipients).toEqual(["reviewer@larkspur.example"]);
    expect(inbox[0].subject).toContain("mentioned you");
    expect(inbox[0].text).toContain("/threads/t_r#");
  });

  it("the link in a mention e-mail is the thread's permalink under the configured public URL", async () => {
    setup();
    inbox.length = 0;
    process.env.RUNNEL_PUBLIC_URL = "https://runnel.larkspur.example/";
    try {
      const { POST } = await import("@/app/api/threads/[id]/comments/route");
      const res = await POST(
        request("designer", "POST", "/api/threads/t_r/comments", { body: "@reviewer the ratio moved" }),
        ctx("t_r"),
      );
      expect(res.status).toBe(201);
      await waitFor(1);
      expect(inbox).toHaveLength(1);
      const links = inbox[0].text.match(/https?:\/\/\S+/g);
      expect(links).toEqual([`https://runnel.larkspur.example/threads/t_r#${(await res.json()).commentId}`]);
    } finally {
      delete process.env.RUNNEL_PUBLIC_URL;
    }
  });

  it("a viewer and a designer cannot sign off; a reviewer can", async () => {
    setup();
    const { POST } = await import("@/app/api/threads/[id]/comments/route");
    const body = { body: "", verdict: "signed_off" };
    expect((await POST(request("viewer", "POST", "/api/threads/t_r/comments", body), ctx("t_r"))).status).toBe(403);
    expect((await POST(request("designer", "POST", "/api/threads/t_r/comments", body), ctx("t_r"))).status).toBe(403);
    expect((await POST(request("reviewer", "POST", "/api/threads/t_r/comments", body), ctx("t_r"))).status).toBe(201);
    const { GET } = await import("@/app/api/threads/[id]/route");
    const view = await (await GET(request("viewer", "GET", "/api/threads/t_r"), ctx("t_r"))).json();
    expect(view.review).toBe("signed_off");
  });

  it("a non-member cannot read a thread by its permalink (404, like an unknown id)", async () => {
    setup();
    const { GET } = await import("@/app/api/threads/[id]/route");
    const outsider = await GET(request("outsider", "GET", "/api/threads/t_r"), ctx("t_r"));
    const unknown = await GET(request("outsider", "GET", "/api/threads/t_none"), ctx("t_none"));
    expect(outsider.status).toBe(404);
    expect(unknown.status).toBe(404);
    expect(await outsider.json()).toEqual(await unknown.json());
  });

  it("compare answers JSON with tolerances; a bad tolerance names the field", async () => {
    const h = setup();
    const { GET } = await import("@/app/api/compare/route");
    const ok = await (
      await GET(request("viewer", "GET", `/api/compare?from=${h.first.id}&to=${h.second.id}&rel=1e-3`))
    ).json();
    expect(ok.results.beyond).toBe(12);
    expect(ok.results.tolerance.rel).toBe(1e-3);
    const bad = await GET(request("viewer", "GET", `/api/compare?from=${h.first.id}&to=${h.second.id}&rel=-1`));
    expect(bad.status).toBe(400);
    expect((await bad.json()).error).toMatch(/^rel: /);
  });

  it("a bad CSV upload is refused with row and column, through the form upload", async () => {
    const h = setup();
    const { POST, GET } = await import("@/app/api/networks/[id]/measurements/route");
    const fd = new FormData();
    fd.set(
      "file",
      new File(
        [new Uint8Array([...new TextEncoder().encode("iin [nA], ratio [1]\n1, 0.5\n2, "), 0xe9, 0x0a])],
        "latin1.csv",
      ),
    );
    const headers = new Headers({ origin: SITE, host: new URL(SITE).host, cookie: fixture.actors.designer!.cookie });
    const res = await POST(
      new Request(`${SITE}/api/networks/${h.network.id}/measurements`, { method: "POST", headers, body: fd }),
      ctx(h.network.id),
    );
    expect(res.status).toBe(422);
    const body = await res.json();
    expect(body.error).toMatch(/^row 3, column 2: byte 0xE9/);
    expect(body.errors[0]).toMatchObject({ row: 3, column: 2 });
    const list = await (
      await GET(request("designer", "GET", `/api/networks/${h.network.id}/measurements`), ctx(h.network.id))
    ).json();
    expect(list.measurements).toEqual([]);
  });

  it("a stored upload is answered with its summary as listed, not its values", async () => {
    const h = setup();
    const { POST, GET } = await import("@/app/api/networks/[id]/measurements/route");
    const rows = ["iin [nA], ratio [1]", ...Array.from({ length: 5000 }, (_, k) => `${k + 1}, 0.5`)].join("\n");
    const fd = new FormData();
    fd.set("file", new File([rows], "sweep.csv"));
    const headers = new Headers({ origin: SITE, host: new URL(SITE).host, cookie: fixture.actors.designer!.cookie });
    const res = await POST(
      new Request(`${SITE}/api/networks/${h.network.id}/measurements`, { method: "POST", headers, body: fd }),
      ctx(h.network.id),
    );
    expect(res.status).toBe(201);
    const body = (await res.json()) as { measurement: Record<string, unknown> };
    expect(body.measurement).toMatchObject({ name: "sweep.csv", xName: "iin", rows: 5000 });
    expect(JSON.stringify(body)).not.toContain("values");
    const list = await (
      await GET(request("designer", "GET", `/api/networks/${h.network.id}/measurements`), ctx(h.network.id))
    ).json();
    expect(list.measurements).toEqual([body.measurement]);
  });

  it("a million-row upload is stored whole by the pool thread (the request thread neither packs nor writes it)", async () => {
    const h = setup();
    const { POST } = await import("@/app/api/networks/[id]/measurements/route");
    const { getMeasurement } = await import("@/app/lib/review/measurement-store");
    const lines = ["tap [1], i [A]"];
    for (let k = 0; k < 1_000_000; k++) lines.push(`${k},${k % 10}`);
    const csv = lines.join("\n") + "\n";
    expect(csv.length).toBeLessThan(10 * 1024 * 1024);
    const fd = new FormData();
    fd.set("file", new File([csv], "million.csv"));
    fd.set("commitId", h.first.id);
    const headers = new Headers({ origin: SITE, host: new URL(SITE).host, cookie: fixture.actors.designer!.cookie });
    const res = await POST(
      new Request(`${SITE}/api/networks/${h.network.id}/measurements`, { method: "POST", headers, body: fd }),
      ctx(h.network.id),
    );
    expect(res.status).toBe(201);
    const { measurement } = (await res.json()) as { measurement: { id: string; rows: number; commitId: string } };
    expect(measurement).toMatchObject({ rows: 1_000_000, commitId: h.first.id });
    const stored = getMeasurement(measurement.id)!;
    expect(stored.x.values[999_999]).toBe(999_999);
    expect(stored.series[0]).toMatchObject({ name: "i", unit: "A" });
    expect(stored.series[0].values[12_347]).toBe(7);
  });
});
