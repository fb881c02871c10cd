"use client";

/** One point's devices: current, inversion coefficient, region and saturation, with a filter for the flagged ones. */
import type { ColumnDef } from "@tanstack/react-table";
import { useMemo, useState } from "react";
import { formatEng, formatNumber } from "@/app/lib/format";
import type { PointData } from "@/app/lib/point-codec";
import { DataTable } from "@/app/ui/workbench/data-table";
import { WEAK_INVERSION_IC } from "@/src/lang/vocabulary";
import { region } from "./regions";

export function DevicesPanel({ point }: { point: PointData }) {
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
  const [onlyFlagged, setOnlyFlagged] = useState(false);
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
        header: "current",
        accessorFn: (r) => r.current,
        cell: (c) => formatEng(c.getValue<number>(), "A", 4),
      },
      {
        id: "ic",
        header: "inversion coeff.",
        accessorFn: (r) => r.ic,
        cell: (c) => formatNumber(c.getValue<number>(), 3),
      },
      { id: "region", header: "region", accessorFn: (r) => region(r.ic) },
      { id: "saturated", header: "saturated", accessorFn: (r) => (r.saturated ? "yes" : "no") },
    ],
    [],
  );
  return (
    <div className="space-y-2">
      <label className="flex items-center gap-2 text-sm">
        <input type="checkbox" checked={onlyFlagged} onChange={(e) => setOnlyFlagged(e.target.checked)} /> only devices
        outside weak inversion or not saturated
      </label>
      <DataTable
        label="Devices"
        rows={shown}
        columns={cols}
        filterPlaceholder="Filter devices"
        rowClass={(r) => (!r.saturated || r.ic > WEAK_INVERSION_IC ? "bg-amber-50" : "")}
      />
    </div>
  );
}
