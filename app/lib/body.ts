/**
 * Request bodies read as streams, stopping at a limit.
 *
 * Contract
 * - A declared Content-Length over the limit is refused (413) before a byte is read.
 * - Otherwise the body is read chunk by chunk and refused (413) as soon as the
 *   bytes received cross the limit; the rest is never read (the stream is
 *   cancelled), so a chunked upload without a length cannot make the server
 *   hold more than the limit plus one chunk.
 * - Callers authenticate before they read (app/lib/guard.ts `signedIn`), so an
 *   anonymous request is answered 401 without its body being read at all.
 */
import { RequestError } from "./http";

const mb = (n: number) => `${(n / 1048576).toFixed(n < 1048576 ? 2 : 1)} MB`;

/** The whole body, at most `limit` bytes (RequestError 413 otherwise, naming `what` and the limit). */
export async function readBodyBytes(request: Request, limit: number, what = "the body"): Promise<Uint8Array> {
  const declared = request.headers.get("content-length");
  if (declared !== null && Number(declared) > limit)
    throw new RequestError(413, `${what} is ${mb(Number(declared))}; the limit is ${mb(limit)}`);
  if (!request.body) return new Uint8Array(0);
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      size += value.byteLength;
      if (size > limit) {
        void reader.cancel().catch(() => undefined);
        throw new RequestError(413, `${what} is larger than the limit of ${mb(limit)}`);
      }
      chunks.push(value);
    }
  } finally {
    reader.releaseLock();
  }
  if (chunks.length === 1) return chunks[0];
  const out = new Uint8Array(size);
  let at = 0;
  for (const c of chunks) {
    out.set(c, at);
    at += c.byteLength;
  }
  return out;
}

/** The body as UTF-8 text, at most `limit` bytes (RequestError 400 for bytes that are not UTF-8). */
export async function readBodyText(request: Request, limit: number, what = "the body"): Promise<string> {
  const bytes = await readBodyBytes(request, limit, what);
  try {
    return new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    throw new RequestError(400, `${what} is not valid UTF-8 text`);
  }
}
