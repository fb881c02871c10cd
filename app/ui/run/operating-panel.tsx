"use client";

/** One point's operating point: node voltages, rail currents and probe values. */
import type { ColumnDef } from "@tanstack/react-table";
import { useMemo } from "react";
import { useFormat } from "@/app/ui/notation";
import type { PointData } from "@/app/lib/point-codec";
import { DataTable } from "@/app/ui/workbench/data-table";

export function OperatingPanel({ point, probeUnits }: { point: PointData; probeUnits: (string | null)[] }) {
  const fmt = useFormat();
  const nodes = useMemo(
    () => point.nodes.names.map((name, k) => ({ name, rail: point.nodes.isRail[k], voltage: point.nodes.voltage[k] })),
    [point],
  );
  const rails = useMemo(() => point.rails.names.map((name, k) => ({ name, current: point.rails.current[k] })), [point]);
  const probes = useMemo(
    () => point.probes.names.map((name, k) => ({ name, value: point.probes.value[k], unit: probeUnits[k] ?? null })),
    [point, probeUnits],
  );
  const nodeCols = useMemo<ColumnDef<(typeof nodes)[number]>[]>(
    () => [
      { id: "name", header: "node", accessorKey: "name" },
      { id: "kind", header: "kind", accessorFn: (r) => (r.rail ? "rail" : "internal") },
      {
        id: "voltage",
        header: "voltage (V)",
        accessorFn: (r) => r.voltage,
        cell: (c) => fmt(c.getValue<number>(), "V"),
      },
    ],
    [fmt],
  );
  const railCols = useMemo<ColumnDef<(typeof rails)[number]>[]>(
    () => [
      { id: "name", header: "rail", accessorKey: "name" },
      {
        id: "current",
        header: "current delivered (A)",
        accessorFn: (r) => r.current,
        cell: (c) => fmt(c.getValue<number>(), "A"),
      },
    ],
    [fmt],
  );
  const probeCols = useMemo<ColumnDef<(typeof probes)[number]>[]>(
    () => [
      { id: "name", header: "probe", accessorKey: "name" },
      {
        id: "value",
        header: "value",
        accessorFn: (r) => r.value,
        cell: (c) => fmt(c.getValue<number>(), c.row.original.unit),
      },
    ],
    [fmt],
  );
  return (
    <div className="grid gap-6 lg:grid-cols-2">
      <div className="space-y-2">
        <h3 className="text-sm font-medium">Nodes</h3>
        <DataTable label="Nodes" rows={nodes} columns={nodeCols} filterPlaceholder="Filter nodes" />
      </div>
      <div className="space-y-6">
        <div className="space-y-2">
          <h3 className="text-sm font-medium">Rails</h3>
          <DataTable label="Rails" rows={rails} columns={railCols} filterPlaceholder="Filter rails" pageSize={10} />
        </div>
        {probes.length ? (
          <div className="space-y-2">
            <h3 className="text-sm font-medium">Probes</h3>
            <DataTable
              label="Probes"
              rows={probes}
              columns={probeCols}
              filterPlaceholder="Filter probes"
              pageSize={10}
            />
          </div>
        ) : null}
        <p className="tabular text-xs text-stone-500">
          solver: {point.solver.method}, {point.solver.iterations} iteration(s), KCL residual{" "}
          {fmt(point.solver.residual, "A")}
        </p>
      </div>
    </div>
  );
}
