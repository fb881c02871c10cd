/**
 * A run's points as CSV (RFC 4180 quoting), the columns of the workbench's
 * CSV export: `probes` has one row per point (point, sample, every param and
 * temp, probes, solver figures, error); `nodes`, `devices`, `rails` one row
 * per point and element. Numbers in full precision (shortest round-trip
 * form; an inversion coefficient to 7 digits), SI base units named in the
 * header; a number that is not finite is an empty field.
 */

import { type Network, NFET } from "../lang/network";
import type { Selection } from "./json-format";
import type { PointResult } from "./results";

/** The tables a run's points can be printed as (the workbench's export and `runnel solve --csv`). */
export const CSV_TABLES = ["probes", "nodes", "devices", "rails"] as const;
export type CsvTable = (typeof CSV_TABLES)[number];

/** One CSV field: quoted when it holds a comma, quote or line break. */
export function csvField(v: string | number | null): string {
  if (v === null) return "";
  if (typeof v === "number") return Number.isFinite(v) ? String(v) : "";
  return /[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}

/** One CSV row with its line break. */
export const csvLine = (fields: (string | number | null)[]): string => fields.map(csvField).join(",") + "\r\n";

/**
 * A table's header row: `params` are every param then temp, as the probes table prints them (a run's layout
 * holds them in that order).
 */
export function csvHeader(table: CsvTable, params: readonly string[], probes: readonly string[]): string {
  switch (table) {
    case "probes":
      return csvLine(["point", "sample", ...params, ...probes, "method", "iterations", "residual_A", "error"]);
    case "nodes":
      return csvLine(["point", "sample", "node", "rail", "voltage_V"]);
    case "devices":
      return csvLine(["point", "sample", "device", "type", "current_A", "ic", "saturated"]);
    case "rails":
      return csvLine(["point", "sample", "rail", "current_A"]);
  }
}

export class CsvRows {
  private readonly at: Int32Array;
  /** Per printed element: its name field and, for nodes, its rail flag; for devices, its type. */
  private readonly label: string[];

  constructor(
    private readonly net: Network,
    readonly table: CsvTable,
    select: Selection,
  ) {
    const { nodes, devices, rails } = net;
    const all = (n: number) => Int32Array.from({ length: n }, (_, k) => k);
    if (table === "nodes") {
      this.at = select.nodes ?? all(nodes.names.length);
      this.label = Array.from(
        this.at,
        (k) => `${csvField(nodes.names[k])},${Number.isFinite(nodes.railValue[k]) ? 1 : 0},`,
      );
    } else if (table === "devices") {
      this.at = select.devices ?? all(devices.count);
      this.label = Array.from(
        this.at,
        (d) => `${csvField(devices.names[d])},${devices.type[d] === NFET ? "nfet" : "pfet"},`,
      );
    } else if (table === "rails") {
      this.at = select.rails ?? all(rails.length);
      this.label = Array.from(this.at, (q) => `${csvField(rails[q].name)},`);
    } else {
      this.at = new Int32Array(0);
      this.label = [];
    }
  }

  header(): string {
    const net = this.net;
    return csvHeader(
      this.table,
      [...net.params.map((p) => p.name), "temp"],
      net.probes.map((p) => p.name),
    );
  }

  /** The point's rows, handed to `sink` (one piece per table row for probes, per point otherwise). */
  rows(p: PointResult, sink: (text: string) => void): void {
    const net = this.net;
    const lead = `${p.index},${p.sample ?? 0},`;
    const f = csvField;
    const { at, label } = this;
    let s = "";
    switch (this.table) {
      case "probes": {
        const params = net.params.map((q) => p.params[q.name] ?? q.value);
        const probes = net.probes.map((q) => p.probes[q.name] ?? NaN);
        const { method, iterations, residual } = p.solver;
        sink(
          csvLine([
            p.index,
            p.sample ?? 0,
            ...params,
            p.params.temp ?? net.settings.temp,
            ...probes,
            method,
            iterations,
            residual,
            p.ok ? null : (p.error ?? "not solved"),
          ]),
        );
        return;
      }
      case "nodes":
        for (let k = 0; k < at.length; k++) s += `${lead}${label[k]}${f(p.voltages[at[k]])}\r\n`;
        break;
      case "devices":
        for (let k = 0; k < at.length; k++) {
          const d = at[k];
          const ic = p.ic[d];
          s += `${lead}${label[k]}${f(p.currents[d])},${Number.isFinite(ic) ? Number(ic.toPrecision(7)) : ""},${p.saturated[d]}\r\n`;
          if (s.length > 1 << 20) {
            sink(s);
            s = "";
          }
        }
        break;
      case "rails":
        for (let k = 0; k < at.length; k++) s += `${lead}${label[k]}${f(p.railCurrents[net.rails[at[k]].node])}\r\n`;
        break;
    }
    if (s) sink(s);
  }
}
