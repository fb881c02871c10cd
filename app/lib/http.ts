/**
 * What every route handler shares: one error type for bad requests, the JSON
 * body parser (zod), and `handle`, which turns known errors into JSON
 * responses with their status. Contract: bad input of any kind answers 4xx
 * with `{ error: "<what and where>" }`, never a 500; a database locked by other
 * writers past the retry budget answers 503 with Retry-After (app/lib/db-busy.ts).
 */
import type { z } from "zod";
import { readBodyText } from "./body";
import { busyResponse, isBusy } from "./db-busy";
import { PolicyError, policyResponse } from "./policy";

export type RequestStatus = 400 | 404 | 409 | 413 | 422 | 429 | 503;

/** A request the server understood but will not carry out; `details` are added to the JSON body. */
export class RequestError extends Error {
  constructor(
    readonly status: RequestStatus,
    message: string,
    readonly details: Record<string, unknown> = {},
  ) {
    super(message);
  }
}

/** Runs a handler body; PolicyError and RequestError become their JSON responses. */
export async function handle(body: () => Promise<Response> | Response): Promise<Response> {
  try {
    return await body();
  } catch (e) {
    if (e instanceof PolicyError) return policyResponse(e);
    if (e instanceof RequestError) return Response.json({ error: e.message, ...e.details }, { status: e.status });
    if (isBusy(e)) return busyResponse();
    console.error(e);
    return Response.json({ error: "internal error (the server log has the details)" }, { status: 500 });
  }
}

/** Largest JSON body accepted (a network text may be up to 2 MiB; JSON escaping adds some). */
export const MAX_BODY_BYTES = 6 * 1024 * 1024;

/**
 * The request's JSON body checked against `schema`; RequestError 400/413 naming the field otherwise.
 * The body is streamed and refused as soon as it crosses MAX_BODY_BYTES (app/lib/body.ts).
 */
export async function readJson<S extends z.ZodType>(request: Request, schema: S): Promise<z.infer<S>> {
  const raw = await readBodyText(request, MAX_BODY_BYTES);
  let value: unknown;
  try {
    value = raw === "" ? {} : JSON.parse(raw);
  } catch {
    throw new RequestError(400, "the body is not valid JSON");
  }
  return parseInput(schema, value);
}

/** `value` checked against `schema` (query strings, bodies); RequestError 400 naming the first bad field. */
export function parseInput<S extends z.ZodType>(schema: S, value: unknown): z.infer<S> {
  const r = schema.safeParse(value);
  if (r.success) return r.data;
  const issue = r.error.issues[0];
  const where = issue.path.length ? issue.path.join(".") : "body";
  throw new RequestError(400, `${where}: ${issue.message}`);
}

/** The query parameters of a request as a plain object (for `parseInput`). */
export function queryOf(request: Request): Record<string, string> {
  return Object.fromEntries(new URL(request.url).searchParams);
}

/** JSON that must not be cached by the browser (live state: runs, progress). */
export function fresh(body: unknown, init: ResponseInit = {}): Response {
  const headers = new Headers(init.headers);
  headers.set("cache-control", "no-store");
  return Response.json(body, { ...init, headers });
}

/** The request's body as bytes, read as a stream and refused (413) as soon as it passes `max` bytes. */
export async function readBytes(request: Request, max: number): Promise<Uint8Array> {
  const length = Number(request.headers.get("content-length") ?? "0");
  if (length > max) throw new RequestError(413, `the body is too large: ${length} bytes, the limit is ${max}`);
  if (!request.body) return new Uint8Array(0);
  const parts: Uint8Array[] = [];
  let size = 0;
  const reader = request.body.getReader();
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    size += value.byteLength;
    if (size > max) {
      await reader.cancel().catch(() => undefined);
      throw new RequestError(413, `the body is too large: the limit is ${max} bytes`);
    }
    parts.push(value);
  }
  const out = new Uint8Array(size);
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.byteLength;
  }
  return out;
}
