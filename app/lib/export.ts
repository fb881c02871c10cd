/**
 * Run exports, streamed one point per chunk so a large run never sits in
 * memory whole and the request thread yields between points.
 * - CSV (RFC 4180 quoting): `probes` has one row per point (point, sample,
 *   params, probes, solver figures); `nodes`, `devices`, `rails` have one row
 *   per point and name. Numbers are written in full precision (shortest
 *   round-trip form), in SI base units named in the header.
 * - JSON: the document of `runnel solve --json` (LANGUAGE.md) with a `run` member.
 */
import type { CommitDiagnostic } from "@/db/schema";
import type { JsonPoint } from "@/src/solver/index";
import type { CommitRow } from "./networks";
import { db, type Q } from "@/db";
import type { StoredPoint } from "./point-codec";
import { eachPoint, readPoint, type RunLayout } from "./results";
import type { RunRow } from "./runs";

export type CsvTable = "probes" | "nodes" | "devices" | "rails";

/** One CSV field: quoted when it holds a comma, quote or line break. */
export function csvField(v: string | number | null): string {
  if (v === null) return "";
  if (typeof v === "number") return Number.isFinite(v) ? String(v) : "";
  return /[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}

const line = (fields: (string | number | null)[]): string => fields.map(csvField).join(",") + "\r\n";

export function csvHeader(layout: RunLayout, table: CsvTable): string {
  switch (table) {
    case "probes":
      return line([
        "point",
        "sample",
        ...layout.params,
        ...layout.probes,
        "method",
        "iterations",
        "residual_A",
        "error",
      ]);
    case "nodes":
      return line(["point", "sample", "node", "rail", "voltage_V"]);
    case "devices":
      return line(["point", "sample", "device", "type", "current_A", "ic", "saturated"]);
    case "rails":
      return line(["point", "sample", "rail", "current_A"]);
  }
}

export function csvRows(layout: RunLayout, table: CsvTable, p: StoredPoint): string {
  switch (table) {
    case "probes":
      return line([p.point, p.sample, ...p.params, ...p.probes, p.method, p.iterations, p.residual, p.error]);
    case "nodes": {
      let s = "";
      for (let k = 0; k < layout.nodes.length; k++)
        s += line([p.point, p.sample, layout.nodes[k], layout.nodeIsRail[k] ? 1 : 0, p.nodes[k]]);
      return s;
    }
    case "devices": {
      let s = "";
      for (let k = 0; k < layout.devices.length; k++) {
        s += line([
          p.point,
          p.sample,
          layout.devices[k],
          layout.deviceTypes[k] === "n" ? "nfet" : "pfet",
          p.current[k],
          Number.isFinite(p.ic[k]) ? Number(p.ic[k].toPrecision(7)) : null,
          p.saturated[k],
        ]);
      }
      return s;
    }
    case "rails": {
      let s = "";
      for (let k = 0; k < layout.rails.length; k++) s += line([p.point, p.sample, layout.rails[k], p.rails[k]]);
      return s;
    }
  }
}

/** A byte stream of chunks from a generator of strings, one chunk per pull. */
function streamOf(chunks: Generator<string>): ReadableStream<Uint8Array> {
  const enc = new TextEncoder();
  return new ReadableStream<Uint8Array>({
    pull(controller) {
      const next = chunks.next();
      if (next.done) controller.close();
      else controller.enqueue(enc.encode(next.value));
    },
    cancel() {
      chunks.return(undefined);
    },
  });
}

export function csvStream(
  runId: string,
  layout: RunLayout,
  table: CsvTable,
  point?: number,
  d: Q = db(),
): ReadableStream<Uint8Array> {
  function* gen(): Generator<string> {
    yield csvHeader(layout, table);
    if (point !== undefined) {
      const p = readPoint(runId, point, d);
      if (p) yield csvRows(layout, table, p);
      return;
    }
    for (const p of eachPoint(runId, d)) yield csvRows(layout, table, p);
  }
  return streamOf(gen());
}

const num = (v: number): number | null => (Number.isFinite(v) ? v : null);

/** One point in the `runnel solve --json` shape (a NaN prints as null). */
export function pointJson(layout: RunLayout, p: StoredPoint): JsonPoint {
  const params: Record<string, number> = {};
  // Only swept params and temp vary; the document lists every param, as the CLI does.
  layout.params.forEach((name, j) => {
    if (name !== "temp" || layout.sweeps.some((s) => s.param === "temp")) params[name] = p.params[j];
  });
  const nodes: Record<string, number> = {};
  layout.nodes.forEach((name, k) => {
    if (!layout.nodeIsRail[k]) nodes[name] = p.nodes[k];
  });
  const rails: Record<string, number> = {};
  layout.rails.forEach((name, k) => (rails[name] = p.rails[k]));
  const devices: JsonPoint["devices"] = {};
  layout.devices.forEach(
    (name, k) => (devices[name] = { current: p.current[k], ic: num(p.ic[k]), saturated: p.saturated[k] === 1 }),
  );
  const probes: Record<string, number | null> = {};
  layout.probes.forEach((name, k) => (probes[name] = num(p.probes[k])));
  return {
    params,
    nodes,
    rails,
    devices,
    probes,
    solver: { method: p.method, iterations: p.iterations, residual: p.residual },
    sample: layout.mismatch ? p.sample : 0,
    ...(p.error ? { error: p.error } : {}),
  };
}

export function jsonStream(run: RunRow, commit: CommitRow, layout: RunLayout, d: Q = db()): ReadableStream<Uint8Array> {
  function* gen(): Generator<string> {
    const diagnostics = commit.diagnostics.map((x: CommitDiagnostic) => ({
      severity: x.severity,
      line: x.line,
      column: x.column,
      message: x.message,
    }));
    const head = {
      network: layout.network,
      ok: commit.ok,
      run: {
        id: run.id,
        commit: commit.id,
        state: run.state,
        reason: run.reason,
        pointsDone: run.pointsDone,
        pointsTotal: run.pointsTotal,
        model: run.model,
        solverReason: run.solverReason,
      },
      diagnostics,
    };
    yield JSON.stringify(head).slice(0, -1) + ',"points":[';
    let first = true;
    for (const p of eachPoint(run.id, d)) {
      yield (first ? "" : ",") + JSON.stringify(pointJson(layout, p));
      first = false;
    }
    yield "]}";
  }
  return streamOf(gen());
}
