/**
 * The client's one way to the API: SWR fetchers (JSON, bytes) and senders
 * (JSON, a multipart form). Every one throws ApiError carrying the server's
 * one-line `error` message, the status and the whole answer (e.g. `errors`
 * with line and column of a refused upload).
 */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly body: Record<string, unknown>,
  ) {
    super(message);
  }
}

async function parse<T>(res: Response): Promise<T> {
  const body = (await res.json().catch(() => ({}))) as Record<string, unknown>;
  if (!res.ok)
    throw new ApiError(
      res.status,
      typeof body.error === "string" ? body.error : `request failed (${res.status})`,
      body,
    );
  return body as T;
}

/** SWR fetcher: GET `url` as JSON. */
export async function getJson<T>(url: string): Promise<T> {
  return parse<T>(await fetch(url, { headers: { accept: "application/json" } }));
}

/** POST/PATCH a JSON body; resolves to the JSON answer. */
export async function sendJson<T>(method: "POST" | "PATCH", url: string, body: unknown): Promise<T> {
  return parse<T>(
    await fetch(url, {
      method,
      headers: { "content-type": "application/json", accept: "application/json" },
      body: JSON.stringify(body),
    }),
  );
}

/** POST a form (multipart, e.g. a file upload); resolves to the JSON answer. */
export async function sendForm<T>(url: string, form: FormData): Promise<T> {
  return parse<T>(await fetch(url, { method: "POST", headers: { accept: "application/json" }, body: form }));
}

/** SWR fetcher for binary answers (a point of a run): the body's bytes, or ApiError with the server's message. */
export async function getBytes(url: string): Promise<ArrayBuffer> {
  const res = await fetch(url);
  if (!res.ok) await parse(res);
  return res.arrayBuffer();
}
