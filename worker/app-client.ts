/**
 * A queue worker's calls to the app (app/api/worker/…), with its worker token.
 * A call that meets a network error or a 5xx is retried with back-off for
 * about a minute (the app may be restarting); a 4xx is an answer.
 */
import type { ClaimAnswer } from "@/app/lib/run-ingest";
import type { StopKind } from "@/app/lib/run-chunk";
import type { ChunkEnd } from "@/app/lib/run-wire";

export interface Hello {
  queue: string;
  workspace: string | null;
  lockMs: number;
  stalledMs: number;
}

/** An answer of the app that is not a success: `status` and its `error` text. */
export class AppRefusal extends Error {
  constructor(
    readonly status: number,
    message: string,
  ) {
    super(message);
  }
}

const RETRY_MS = 60_000;

export class AppClient {
  constructor(
    readonly base: string,
    private readonly token: string,
  ) {}

  private async call(path: string, init: RequestInit = {}): Promise<Response> {
    const url = new URL(path, this.base).href;
    const end = Date.now() + RETRY_MS;
    for (let wait = 250; ; wait = Math.min(wait * 2, 5_000)) {
      let res: Response | null = null;
      let problem = "";
      try {
        res = await fetch(url, { ...init, headers: { ...init.headers, authorization: `Bearer ${this.token}` } });
        if (res.status < 500) {
          if (res.ok) return res;
          const body = (await res.json().catch(() => ({}))) as { error?: string };
          throw new AppRefusal(res.status, body.error ?? `${res.status} from ${path}`);
        }
        problem = `${res.status} ${await res.text().catch(() => "")}`.slice(0, 200);
      } catch (e) {
        if (e instanceof AppRefusal) throw e;
        problem = (e as Error).message;
      }
      if (Date.now() + wait > end) throw new Error(`the app at ${this.base} did not answer ${path}: ${problem}`);
      await new Promise((f) => setTimeout(f, wait));
    }
  }

  async hello(): Promise<Hello> {
    return (await (await this.call("/api/worker/hello")).json()) as Hello;
  }

  async claim(runId: string, chunk: number): Promise<ClaimAnswer> {
    const res = await this.call("/api/worker/claims", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ runId, chunk }),
    });
    return ((await res.json()) as { claim: ClaimAnswer }).claim;
  }

  async commitText(commitId: string): Promise<string> {
    return (await this.call(`/api/worker/commits/${encodeURIComponent(commitId)}`)).text();
  }

  async points(
    runId: string,
    chunk: number,
    attempt: number,
    batch: Uint8Array,
  ): Promise<{ stored: number; stop: StopKind }> {
    const res = await this.call(`/api/worker/chunks/${encodeURIComponent(runId)}/${chunk}/points?attempt=${attempt}`, {
      method: "POST",
      headers: { "content-type": "application/octet-stream" },
      body: batch as Uint8Array<ArrayBuffer>,
    });
    return (await res.json()) as { stored: number; stop: StopKind };
  }

  async end(runId: string, chunk: number, end: ChunkEnd): Promise<{ stop: StopKind }> {
    const res = await this.call(`/api/worker/chunks/${encodeURIComponent(runId)}/${chunk}/end`, {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify(end),
    });
    return (await res.json()) as { stop: StopKind };
  }
}
