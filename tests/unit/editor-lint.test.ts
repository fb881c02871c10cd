import { EditorState, type TransactionSpec } from "@codemirror/state";
import type { EditorView } from "@codemirror/view";
import { describe, expect, it } from "vitest";
import { elaborate } from "../../src/lang/index";
import type { Diagnostic } from "../../src/lang/network";
import {
  answerLintRequest,
  elaboratedNames,
  LintClient,
  type LintPort,
  type LintReply,
  type LintRequest,
  runnel,
  runnelLintSource,
  toEditorDiagnostics,
} from "../../src/editor/index";
import { parsed } from "../helpers/editor-state";

const BROKEN = [
  "rail vdd = 1.2\nnfet m1 gate=vdd source=x drain=\nfrob 3\nprobe p = voltage(nope)\n",
  "param a = 2V\nrail vdd = a\nnfet m1 gate=vdd source=x drain=vdd w=3A\nset model = tall\n",
  "for k in 1..3 {\n  nfet a{k} gate=g source=x{k} drain=x{k+1}\n}\nrail g = 0.4\nsweep zz from 1 to 2 step 0.5\n",
  "nfet m1 gate=a source=b drain=c\nfor k in 1..2 {\n",
];

const GOOD = "rail vdd = 1\nrail gnd = 0\nnfet m1 gate=vdd source=gnd drain=x\ninject i1 from=vdd to=x value=1n\n";

/** Just enough of a view for a lint source: its state, and dispatch applying transactions to it. */
function fakeView(doc: string): { view: EditorView; specs: TransactionSpec[] } {
  const specs: TransactionSpec[] = [];
  const holder = {
    state: parsed(EditorState.create({ doc, extensions: [runnel()] })),
    dispatch(spec: TransactionSpec) {
      specs.push(spec);
      holder.state = holder.state.update(spec).state;
    },
  };
  return { view: holder as unknown as EditorView, specs };
}

describe("diagnostics", () => {
  it.each(BROKEN)("are the elaboration's, with the same spans and severities (%#)", async (text) => {
    const expected = elaborate(text).diagnostics;
    expect(expected.length).toBeGreaterThan(0);
    const { view } = fakeView(text);
    const got = await runnelLintSource()(view);
    expect(got.map((d) => [d.from, d.to, d.severity])).toEqual(expected.map((d) => [d.from, d.to, d.severity]));
    got.forEach((d, i) => {
      expect(d.message.startsWith(expected[i].message)).toBe(true);
      if (expected[i].hint) expect(d.message).toBe(`${expected[i].message}\nhint: ${expected[i].hint}`);
      else expect(d.message).toBe(expected[i].message);
    });
  });

  it("include at least one hint in the broken examples (so hints are checked)", () => {
    expect(BROKEN.some((t) => elaborate(t).diagnostics.some((d) => d.hint))).toBe(true);
  });

  it("are none for a good network", async () => {
    const { view } = fakeView(GOOD);
    expect(await runnelLintSource()(view)).toEqual([]);
  });

  it("are clamped into the document", () => {
    const d: Diagnostic = { severity: "warning", line: 9, column: 1, from: 120, to: 140, message: "past the end" };
    expect(toEditorDiagnostics([d], 100)).toEqual([
      { from: 100, to: 100, severity: "warning", source: "runnel", message: "past the end" },
    ]);
  });

  it("reach onDiagnostics and publish the elaborated names for completion", async () => {
    const text =
      "rail vdd = 1\nrail gnd = 0\nfor k in 1..3 {\n  nfet m{k} gate=vdd source=gnd drain=x{k}\n  inject i{k} from=vdd to=x{k} value=1n\n}\n";
    const { view, specs } = fakeView(text);
    const seen: Diagnostic[][] = [];
    await runnelLintSource({ onDiagnostics: (d) => seen.push(d) })(view);
    expect(seen).toEqual([elaborate(text).diagnostics]);
    expect(specs).toHaveLength(1);
    const names = view.state.field(elaboratedNames);
    expect(names?.nodes).toEqual(expect.arrayContaining(["x1", "x2", "x3", "vdd", "gnd"]));
    expect(names?.elements).toEqual(expect.arrayContaining(["m1", "m3", "i2", "vdd"]));
  });

  it("turn a checker exception into one error diagnostic", () => {
    const reply = answerLintRequest({ id: 7, text: null as unknown as string });
    expect(reply.id).toBe(7);
    expect(reply.diagnostics).toHaveLength(1);
    expect(reply.diagnostics[0].severity).toBe("error");
    expect(reply.diagnostics[0].message).toMatch(/checker failed/);
  });
});

/** A worker stand-in answering each request on the next macrotask, in order. */
class FakeWorker implements LintPort {
  private listeners = new Map<string, ((e: MessageEvent<LintReply>) => void)[]>();
  received: LintRequest[] = [];
  terminated = false;
  answer = true;
  postMessage(message: LintRequest): void {
    this.received.push(message);
    if (this.answer)
      setTimeout(() => this.emit("message", { data: answerLintRequest(message) } as MessageEvent<LintReply>), 0);
  }
  addEventListener(type: string, listener: (e: MessageEvent<LintReply>) => void): void {
    this.listeners.set(type, [...(this.listeners.get(type) ?? []), listener]);
  }
  emit(type: string, e: MessageEvent<LintReply> | Event): void {
    for (const l of this.listeners.get(type) ?? []) l(e as MessageEvent<LintReply>);
  }
  terminate(): void {
    this.terminated = true;
  }
}

describe("the lint worker client", () => {
  it("sends the text and resolves each request with its own reply", async () => {
    const worker = new FakeWorker();
    const client = new LintClient(worker);
    expect(client.offMainThread).toBe(true);
    const [a, b] = await Promise.all([client.elaborate(BROKEN[0]), client.elaborate(GOOD)]);
    expect(worker.received.map((r) => r.text)).toEqual([BROKEN[0], GOOD]);
    expect(a.diagnostics).toEqual(elaborate(BROKEN[0]).diagnostics);
    expect(b.diagnostics).toEqual([]);
    expect(b.names?.elements).toEqual(expect.arrayContaining(["m1", "i1"]));
  });

  it("falls back to the main thread when the worker fails, for pending and later requests", async () => {
    const worker = new FakeWorker();
    worker.answer = false;
    const client = new LintClient(worker);
    const pending = client.elaborate(BROKEN[1]);
    worker.emit("error", new Event("error"));
    expect((await pending).diagnostics).toEqual(elaborate(BROKEN[1]).diagnostics);
    expect(worker.terminated).toBe(true);
    expect(client.offMainThread).toBe(false);
    expect((await client.elaborate(GOOD)).diagnostics).toEqual([]);
    expect(worker.received).toHaveLength(1);
  });

  it("works over a real MessageChannel (structured clone of requests and replies)", async () => {
    const channel = new MessageChannel();
    channel.port2.onmessage = (e: MessageEvent<LintRequest>) => channel.port2.postMessage(answerLintRequest(e.data));
    const port = channel.port1;
    const client = new LintClient(port as unknown as LintPort);
    port.start();
    try {
      const reply = await client.elaborate(BROKEN[2]);
      expect(reply.diagnostics).toEqual(elaborate(BROKEN[2]).diagnostics);
    } finally {
      channel.port1.close();
      channel.port2.close();
    }
  });
});
