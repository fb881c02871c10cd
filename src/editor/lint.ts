/**
 * The Runnel linter: runs the language's own elaboration on the document and
 * shows exactly its diagnostics (same spans, same messages, hint appended).
 *
 * Responsiveness: linting waits for a pause in typing (`delay`), and the
 * elaboration runs in a Web Worker when one can be created, so the main
 * thread only posts the text and maps the reply. Without a worker (tests,
 * old browsers, a worker that failed to load) it elaborates on the main
 * thread; a 5,000-line network then costs about 0.1 s per pause.
 */
import { type Diagnostic as EditorDiagnostic, linter, type LintSource } from "@codemirror/lint";
import type { Extension, Text } from "@codemirror/state";
import { type EditorView, ViewPlugin } from "@codemirror/view";
import type { Diagnostic } from "../lang/network";
import { setElaboratedNames } from "./names";
import { answerLintRequest, type LintReply, type LintRequest } from "./lint-protocol";

/** What the linter needs of a worker (a browser Worker satisfies it; tests pass a MessagePort). */
export interface LintPort {
  postMessage(message: LintRequest): void;
  addEventListener(type: "message", listener: (e: MessageEvent<LintReply>) => void): void;
  addEventListener(type: "error" | "messageerror", listener: (e: Event) => void): void;
  terminate?(): void;
}

export interface RunnelLintOptions {
  /** Milliseconds of quiet after a change before linting; default 400. */
  delay?: number;
  /** Called with the language's diagnostics of every document version that was linted and is still current. */
  onDiagnostics?(diagnostics: Diagnostic[]): void;
  /**
   * Creates the port that elaborates off the main thread; return null to
   * elaborate on the main thread. Default: the bundled lint worker when the
   * environment has `Worker`.
   */
  createWorker?: () => LintPort | null;
}

/** A CodeMirror diagnostic for each language diagnostic; spans are clamped into the document. */
export function toEditorDiagnostics(diagnostics: readonly Diagnostic[], docLength: number): EditorDiagnostic[] {
  return diagnostics.map((d) => {
    const from = Math.max(0, Math.min(d.from, docLength));
    const to = Math.max(from, Math.min(d.to, docLength));
    return {
      from,
      to,
      severity: d.severity,
      source: "runnel",
      message: d.hint ? `${d.message}\nhint: ${d.hint}` : d.message,
    };
  });
}

function defaultWorker(): LintPort | null {
  if (typeof Worker === "undefined") return null;
  try {
    return new Worker(new URL("./lint-worker.ts", import.meta.url), { type: "module", name: "runnel-lint" });
  } catch {
    return null;
  }
}

/**
 * Elaborations through a port, answered in request order. If the port fails
 * (a worker script that did not load, a message that could not be cloned), every
 * pending and later request is answered on the main thread instead.
 */
export class LintClient {
  private nextId = 1;
  private pending = new Map<number, { text: string; resolve(reply: LintReply): void }>();
  private port: LintPort | null;

  constructor(port: LintPort | null) {
    this.port = port;
    if (!port) return;
    port.addEventListener("message", (e: MessageEvent<LintReply>) => {
      const p = this.pending.get(e.data.id);
      if (!p) return;
      this.pending.delete(e.data.id);
      p.resolve(e.data);
    });
    const fail = () => this.fallBack();
    port.addEventListener("error", fail);
    port.addEventListener("messageerror", fail);
  }

  /** True while elaborations go to the port rather than the main thread. */
  get offMainThread(): boolean {
    return this.port !== null;
  }

  elaborate(text: string): Promise<LintReply> {
    const id = this.nextId++;
    if (!this.port) return Promise.resolve(answerLintRequest({ id, text }));
    return new Promise((resolve) => {
      this.pending.set(id, { text, resolve });
      this.port?.postMessage({ id, text });
    });
  }

  private fallBack(): void {
    this.port?.terminate?.();
    this.port = null;
    const pending = [...this.pending.entries()];
    this.pending.clear();
    for (const [id, p] of pending) p.resolve(answerLintRequest({ id, text: p.text }));
  }

  destroy(): void {
    this.port?.terminate?.();
    this.port = null;
    this.pending.clear();
  }
}

/**
 * The lint source: elaborates the document, publishes the elaborated names
 * for completion, and returns the diagnostics. `client` defaults to the
 * main thread.
 */
export function runnelLintSource(
  options: RunnelLintOptions = {},
  client: LintClient = new LintClient(null),
): LintSource {
  return async (view: EditorView) => {
    const doc: Text = view.state.doc;
    const reply = await client.elaborate(doc.toString());
    if (view.state.doc === doc) {
      options.onDiagnostics?.(reply.diagnostics);
      if (reply.names) view.dispatch({ effects: setElaboratedNames.of(reply.names) });
    }
    return toEditorDiagnostics(reply.diagnostics, doc.length);
  };
}

/**
 * The linter extension. Each view gets its own lint client; the worker is
 * created at the view's first lint and ended with the view.
 */
export function runnelLinter(options: RunnelLintOptions = {}): Extension {
  const clients = ViewPlugin.define(() => {
    let client: LintClient | null = null;
    return {
      get client(): LintClient {
        client ??= new LintClient((options.createWorker ?? defaultWorker)());
        return client;
      },
      destroy() {
        client?.destroy();
      },
    };
  });
  const source: LintSource = (view) => {
    const owner = view.plugin(clients);
    return runnelLintSource(options, owner ? owner.client : new LintClient(null))(view);
  };
  return [clients, linter(source, { delay: options.delay ?? 400 })];
}
