/**
 * The binary form of one stored point (GET /api/runs/[id]/results?view=point&format=binary):
 * the run page's tables read it, because a point of a large network is tens of
 * thousands of numbers and JSON-encoding them costs the request thread more
 * than copying the stored blobs.
 *
 * Layout (little-endian): u32 header length H; H bytes of UTF-8 JSON (PointHeader);
 * zero padding to a multiple of 8; then the sections in POINT_SECTIONS order, each
 * `count × element size` bytes, each Float64 section starting on a multiple of 8.
 * Names are not repeated here: they are the run's layout (view=layout).
 * Pure: used on the server (encode) and in the browser (decode).
 */

/**
 * The seven arrays a point stores, in the one order every writer and reader
 * follows: the `run_points` blob columns (app/lib/results.ts), this binary
 * form, the run worker's record (app/lib/run-exec.ts) and the exports. Each
 * holds one value per element of its `count` in the run's layout (names).
 */
export const POINT_SECTIONS = [
  { name: "nodes", type: Float64Array, count: "nodes" },
  { name: "rails", type: Float64Array, count: "rails" },
  { name: "probes", type: Float64Array, count: "probes" },
  { name: "params", type: Float64Array, count: "params" },
  { name: "current", type: Float64Array, count: "devices" },
  { name: "ic", type: Float32Array, count: "devices" },
  { name: "saturated", type: Uint8Array, count: "devices" },
] as const;

export type Section = (typeof POINT_SECTIONS)[number];
export type SectionName = Section["name"];

/** Element counts of a point's sections (from the run's layout). */
export type PointCounts = Record<Section["count"], number>;

/** A point's sections as typed arrays: node voltages, rail currents, probes, params, and per device current, ic, saturation. */
export type PointSections = { [S in Section as S["name"]]: ArrayOf<S["type"]> };
type ArrayOf<C> = C extends Float64ArrayConstructor
  ? Float64Array
  : C extends Float32ArrayConstructor
    ? Float32Array
    : Uint8Array;

/**
 * One stored point: its place in the run, its solver figures and its
 * sections (NaN where a value is unknown; every section NaN when `error`).
 */
export interface StoredPoint extends PointSections {
  point: number;
  sample: number;
  method: "linear" | "newton";
  iterations: number;
  residual: number;
  /** Why the point could not be solved; null when solved. */
  error: string | null;
  /**
   * Each expectation's verdict (1 holds, 0 fails) and margin, in layout.expectations order: stored apart from the
   * sections (run_point_expectations); absent or null for a failed point or a network without expectations.
   */
  expectations?: PointVerdicts | null;
}

/** A point's verdicts and margins, one per expectation of the run's layout. */
export interface PointVerdicts {
  passed: Uint8Array;
  margins: Float64Array;
}

/** A point's verdicts as its JSON header carries them over the wire (app/lib/run-wire.ts): a margin of NaN as null. */
export interface HeaderVerdicts {
  passed: number[];
  margins: (number | null)[];
}

/**
 * The binary form's JSON header: the point without its sections, its grid indices and the sections' counts, and
 * (in a queue worker's batch) its verdicts.
 */
export type PointHeader = Omit<StoredPoint, SectionName | "expectations"> & {
  grid: number[];
  counts: PointCounts;
  verdicts?: HeaderVerdicts | null;
};

/** A decoded point: its header and its sections (views into the received buffer). */
export type DecodedPoint = PointSections & { header: PointHeader };

/** Values a point stores in all its sections. */
export function valuesOf(counts: PointCounts): number {
  let n = 0;
  for (const s of POINT_SECTIONS) n += counts[s.count];
  return n;
}

/** Typed views of a point's sections over their stored bytes (copied only when a blob is not aligned for its type). */
export function sectionsFrom(bytes: (s: Section) => Uint8Array): PointSections {
  const out: Partial<Record<SectionName, ArrayBufferView>> = {};
  for (const s of POINT_SECTIONS) {
    let b = bytes(s);
    const size = s.type.BYTES_PER_ELEMENT;
    if (b.byteOffset % size !== 0) b = b.slice();
    out[s.name] = new s.type(b.buffer as ArrayBuffer, b.byteOffset, b.byteLength / size);
  }
  return out as PointSections;
}

/** A point's sections as bytes, in section order. */
export function sectionBytes(p: PointSections): Uint8Array[] {
  return POINT_SECTIONS.map((s) => {
    const a = p[s.name];
    return new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
  });
}

const pad8 = (n: number) => (n + 7) & ~7;

/** Encodes a point from its header and its sections' bytes (each already the right element type), in section order. */
export function encodePoint(header: PointHeader, arrays: readonly Uint8Array[]): Uint8Array<ArrayBuffer> {
  const json = new TextEncoder().encode(JSON.stringify(header));
  const start = pad8(4 + json.length);
  let size = start;
  for (const a of arrays) size += pad8(a.byteLength);
  const out = new Uint8Array(size);
  new DataView(out.buffer).setUint32(0, json.length, true);
  out.set(json, 4);
  let at = start;
  for (const a of arrays) {
    out.set(a, at);
    at += pad8(a.byteLength);
  }
  return out;
}

export function decodePoint(buf: ArrayBuffer): DecodedPoint {
  const view = new DataView(buf);
  const h = view.getUint32(0, true);
  const header = JSON.parse(new TextDecoder().decode(new Uint8Array(buf, 4, h))) as PointHeader;
  let at = pad8(4 + h);
  const sections = sectionsFrom((s) => {
    const bytes = header.counts[s.count] * s.type.BYTES_PER_ELEMENT;
    const b = new Uint8Array(buf, at, bytes);
    at += pad8(bytes);
    return b;
  });
  return { header, ...sections };
}

/** Names the decoded arrays are in the order of (the run's layout; see app/lib/results.ts RunLayout). */
export interface PointNames {
  nodes: string[];
  /** True where the node is a rail (fixed voltage). */
  nodeIsRail: boolean[];
  devices: string[];
  /** "n" or "p" per device. */
  deviceTypes: string;
  rails: string[];
  probes: string[];
  /** Every param (the point's values, swept or derived), then "temp". */
  params: string[];
}

/**
 * One point with its names, as the run page's tables and plots read it (NaN
 * where a value is unknown). `?view=point` sends the same shape as JSON,
 * its arrays as lists with null for NaN (app/lib/results.ts PointView).
 */
export interface NamedPoint<Values = Float64Array, Small = Float32Array, Flags = Uint8Array, Num = number> {
  point: number;
  sample: number;
  grid: number[];
  params: Record<string, Num>;
  solver: { method: string; iterations: number; residual: Num };
  error: string | null;
  nodes: { names: string[]; isRail: boolean[]; voltage: Values };
  devices: { names: string[]; types: string; current: Values; ic: Small; saturated: Flags };
  rails: { names: string[]; current: Values };
  probes: { names: string[]; value: Values };
}

export type PointData = NamedPoint;

export function pointData(names: PointNames, p: DecodedPoint): PointData {
  const h = p.header;
  return {
    point: h.point,
    sample: h.sample,
    grid: h.grid,
    params: Object.fromEntries(names.params.map((n, j) => [n, p.params[j]])),
    solver: { method: h.method, iterations: h.iterations, residual: h.residual },
    error: h.error,
    nodes: { names: names.nodes, isRail: names.nodeIsRail, voltage: p.nodes },
    devices: { names: names.devices, types: names.deviceTypes, current: p.current, ic: p.ic, saturated: p.saturated },
    rails: { names: names.rails, current: p.rails },
    probes: { names: names.probes, value: p.probes },
  };
}
