"use client";

/** One point's devices: current, inversion coefficient, region and saturation, with a filter for the flagged ones. */
import type { ColumnDef } from "@tanstack/react-table";
import { useMemo } from "react";
import { useFormat } from "@/app/ui/notation";
import type { PointData } from "@/app/lib/point-codec";
import { DataTable } from "@/app/ui/workbench/data-table";
import { WEAK_INVERSION_IC } from "@/src/lang/vocabulary";
import { region } from "./regions";
import { nameMatches } from "./device-groups";

export interface DevicesPanelProps {
  point: PointData;
  /** Filter text and "only flagged" state, kept by the caller so a warning's link can set them. */
  filter: string;
  onFilterChange(text: string): void;
  onlyFlagged: boolean;
  onOnlyFlaggedChange(on: boolean): void;
}

export function DevicesPanel({ point, filter, onFilterChange, onlyFlagged, onOnlyFlaggedChange }: DevicesPanelProps) {
  const fmt = useFormat();
  const rows = useMemo(
    () =>
      point.devices.names.map((name, k) => ({
        name,
        type: point.devices.types[k] === "n" ? "nfet" : "pfet",
        current: point.devices.current[k],
        ic: point.devices.ic[k],
        saturated: point.devices.saturated[k] === 1,
      })),
    [point],
  );
  const shown = useMemo(
    () => (onlyFlagged ? rows.filter((r) => !r.saturated || r.ic > WEAK_INVERSION_IC) : rows),
    [rows, onlyFlagged],
  );
  const cols = useMemo<ColumnDef<(typeof rows)[number]>[]>(
    () => [
      { id: "name", header: "device", accessorKey: "name" },
      { id: "type", header: "type", accessorKey: "type" },
      {
        id: "current",
        header: "current (A)",
        accessorFn: (r) => r.current,
        cell: (c) => fmt(c.getValue<number>(), "A"),
      },
      {
        id: "ic",
        header: "inversion coeff.",
        accessorFn: (r) => r.ic,
        cell: (c) => fmt(c.getValue<number>(), ""),
      },
      { id: "region", header: "region", accessorFn: (r) => region(r.ic) },
      { id: "saturated", header: "saturated", accessorFn: (r) => (r.saturated ? "yes" : "no") },
    ],
    [fmt],
  );
  return (
    <div className="space-y-2">
      <label className="flex items-center gap-2 text-sm">
        <input type="checkbox" checked={onlyFlagged} onChange={(e) => onOnlyFlaggedChange(e.target.checked)} /> only
        devices outside weak inversion or not saturated
      </label>
      <DataTable
        label="Devices"
        rows={shown}
        columns={cols}
        filterPlaceholder="Filter devices (lat· for a pattern)"
        filter={filter}
        onFilterChange={onFilterChange}
        matches={(r, text) => nameMatches(r.name, text)}
        rowClass={(r) => (!r.saturated || r.ic > WEAK_INVERSION_IC ? "bg-amber-50" : "")}
      />
    </div>
  );
}
