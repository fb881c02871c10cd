/**
 * What a queue worker sends the app over HTTP: a batch of a chunk's points in
 * binary (`encodeBatch`), and the chunk's end (figures as JSON, its flag bit
 * sets in base64). The app checks every point of a batch against the run's
 * layout and the chunk's range before storing any (`decodeBatch`).
 *
 * Batch layout: repeated frames of u32 (little-endian) byte length, then one
 * point in the binary form of app/lib/point-codec.ts (its header names the
 * point, and the counts of its sections). A non-finite residual travels as
 * null in the header's JSON and comes back as +∞. A solved point of a network
 * with expectations carries its verdicts and margins in the header
 * (`verdicts`, a NaN margin as null), stored as the in-process pool stores
 * them (run_point_expectations).
 * Pure: used by workers (encode) and the app (decode).
 */
import { z } from "zod";
import {
  decodePoint,
  encodePoint,
  POINT_SECTIONS,
  sectionBytes,
  type PointCounts,
  type PointHeader,
  type PointVerdicts,
  type StoredPoint,
} from "./point-codec";

/** Largest batch the app reads (a point of a 2,000,000-device network alone is about 30 MB). */
export const MAX_BATCH_BYTES = 96 * 1024 * 1024;

export function encodeBatch(points: readonly StoredPoint[], counts: PointCounts): Uint8Array<ArrayBuffer> {
  const frames = points.map((p) => {
    const header: PointHeader = {
      point: p.point,
      sample: p.sample,
      method: p.method,
      iterations: p.iterations,
      residual: Number.isFinite(p.residual) ? p.residual : (null as unknown as number),
      error: p.error,
      grid: [],
      counts,
      verdicts: p.expectations
        ? {
            passed: Array.from(p.expectations.passed),
            margins: Array.from(p.expectations.margins, (m) => (Number.isFinite(m) ? m : null)),
          }
        : null,
    };
    return encodePoint(header, sectionBytes(p));
  });
  let size = 0;
  for (const f of frames) size += 4 + f.byteLength;
  const out = new Uint8Array(size);
  const view = new DataView(out.buffer);
  let at = 0;
  for (const f of frames) {
    view.setUint32(at, f.byteLength, true);
    out.set(f, at + 4);
    at += 4 + f.byteLength;
  }
  return out;
}

/** A batch refused: `message` says what and where (the first bad point). */
export class BatchError extends Error {}

/**
 * The points of a batch, each checked: a frame that fits the body, the section counts of the run's layout, a
 * point inside [start, end), no point twice, a known method, a count of iterations, a residual that is a number
 * (or +∞), an error that is text or null, and verdicts exactly when the point is solved and the network states
 * `expectations` expectations (one 0/1 verdict and one margin each). Throws BatchError for the first problem;
 * nothing is returned partly.
 */
export function decodeBatch(
  body: Uint8Array,
  counts: PointCounts,
  range: { start: number; end: number },
  samples: number,
  expectations = 0,
): StoredPoint[] {
  const out: StoredPoint[] = [];
  const seen = new Set<number>();
  const view = new DataView(body.buffer, body.byteOffset, body.byteLength);
  let at = 0;
  while (at < body.byteLength) {
    if (at + 4 > body.byteLength) throw new BatchError(`frame at byte ${at}: truncated length`);
    const len = view.getUint32(at, true);
    if (len < 8 || at + 4 + len > body.byteLength)
      throw new BatchError(`frame at byte ${at}: length ${len} runs past the body (${body.byteLength} bytes)`);
    // A copy: decodePoint's views need the frame aligned as in its own buffer.
    const frame = body.slice(at + 4, at + 4 + len).buffer;
    let p: ReturnType<typeof decodePoint>;
    try {
      p = decodePoint(frame);
    } catch (e) {
      throw new BatchError(`frame at byte ${at}: not a point (${(e as Error).message})`);
    }
    const h = p.header;
    const where = `point ${String(h?.point)}`;
    if (!Number.isInteger(h.point) || h.point < range.start || h.point >= range.end)
      throw new BatchError(`${where}: outside the chunk's points ${range.start}–${range.end - 1}`);
    if (seen.has(h.point)) throw new BatchError(`${where}: sent twice in one batch`);
    seen.add(h.point);
    if (!Number.isInteger(h.sample) || h.sample !== h.point % samples)
      throw new BatchError(`${where}: sample ${String(h.sample)} is not this point's (${h.point % samples})`);
    if (h.method !== "linear" && h.method !== "newton") throw new BatchError(`${where}: unknown method`);
    if (!Number.isInteger(h.iterations) || h.iterations < 0) throw new BatchError(`${where}: bad iteration count`);
    if (h.residual !== null && typeof h.residual !== "number") throw new BatchError(`${where}: bad residual`);
    if (h.error !== null && (typeof h.error !== "string" || h.error.length > 10_000))
      throw new BatchError(`${where}: bad error text`);
    for (const s of POINT_SECTIONS) {
      if (h.counts?.[s.count] !== counts[s.count] || p[s.name].length !== counts[s.count])
        throw new BatchError(
          `${where}: ${s.name} has ${String(h.counts?.[s.count])} values; the run's layout has ${counts[s.count]}`,
        );
    }
    const verdicts = checkVerdicts(h.verdicts, h.error === null ? expectations : 0, where);
    const { header: _header, ...sections } = p;
    void _header;
    out.push({
      point: h.point,
      sample: h.sample,
      method: h.method,
      iterations: h.iterations,
      residual: h.residual === null ? Infinity : h.residual,
      error: h.error,
      ...sections,
      expectations: verdicts,
    });
    at += 4 + len;
  }
  return out;
}

/** A point's verdicts as stored: `expected` of them (0: none may be sent), each 0 or 1 with a number or null. */
function checkVerdicts(v: unknown, expected: number, where: string): PointVerdicts | null {
  if (v === undefined || v === null) {
    if (expected === 0) return null;
    throw new BatchError(`${where}: solved without the verdicts of the network's ${expected} expectations`);
  }
  if (expected === 0) throw new BatchError(`${where}: verdicts sent for a point that has none`);
  const { passed, margins } = v as { passed?: unknown; margins?: unknown };
  if (!Array.isArray(passed) || !Array.isArray(margins) || passed.length !== expected || margins.length !== expected)
    throw new BatchError(`${where}: verdicts are not ${expected} verdicts and ${expected} margins`);
  if (!passed.every((x) => x === 0 || x === 1)) throw new BatchError(`${where}: a verdict is not 0 or 1`);
  if (!margins.every((x) => x === null || typeof x === "number"))
    throw new BatchError(`${where}: a margin is not a number`);
  return {
    passed: Uint8Array.from(passed as number[]),
    margins: Float64Array.from(margins as (number | null)[], (x) => (x === null ? NaN : x)),
  };
}

const Stats = z.object({
  points: z.number().int().min(0),
  newtonPoints: z.number().int().min(0),
  maxResidual: z.number().min(0),
  solverReason: z.string().max(2_000).nullable(),
  warnings: z
    .array(
      z.object({
        key: z.string().max(200),
        kind: z.string().max(50),
        message: z.string().max(2_000),
        points: z.number().int().min(1),
        firstPoint: z.number().int().min(0),
      }),
    )
    .max(10_000),
  failures: z.array(z.object({ point: z.number().int().min(0), message: z.string().max(10_000) })).max(50),
  failureCount: z.number().int().min(0),
  structural: z.string().max(10_000).nullable(),
});

/**
 * The JSON a worker sends when its chunk ends: done (every point posted) or stopped (a stop answer ended it
 * early), with the chunk's figures and its two per-device bit sets (base64); or failed, with the message.
 */
export const ChunkEnd = z.discriminatedUnion("outcome", [
  z.object({
    outcome: z.enum(["done", "stopped"]),
    attempt: z.number().int().min(1),
    stats: Stats,
    flags: z.string().max(16 * 1024 * 1024),
  }),
  z.object({ outcome: z.literal("failed"), attempt: z.number().int().min(1), message: z.string().min(1).max(2_000) }),
]);
export type ChunkEnd = z.infer<typeof ChunkEnd>;
