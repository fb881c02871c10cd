"use client";

/**
 * The structure of the selected commit (GET /api/commits/[id]/structure):
 * which devices touch which node. A search over names; the drawing of the
 * node–device graph for networks of at most a few hundred devices; the node
 * cross-reference (devices at each node, degree, rail) and the device table
 * (gate, source, drain, bulk). Rows come from the server, capped at 500 per
 * table, so a million-device network stays searchable.
 */
import type { ColumnDef } from "@tanstack/react-table";
import { useDeferredValue, useMemo, useState } from "react";
import useSWR from "swr";
import type { StructureDevice, StructureNode, StructureView } from "@/app/lib/structure";
import { getJson } from "@/app/ui/fetch";
import { StructureGraph } from "./structure-graph";
import { StructureTable } from "./structure-table";

export function StructurePanel({ commitId, title }: { commitId: string; title: string }) {
  const [query, setQuery] = useState("");
  const q = useDeferredValue(query.trim());
  const { data, error, isLoading } = useSWR<{ structure: StructureView }>(
    `/api/commits/${commitId}/structure?q=${encodeURIComponent(q)}`,
    getJson,
    { keepPreviousData: true, revalidateOnFocus: false },
  );
  // The drawing is of the whole network: keep the first answer's graph while searching.
  const all = useSWR<{ structure: StructureView }>(`/api/commits/${commitId}/structure?q=`, getJson, {
    revalidateOnFocus: false,
  });
  const s = data?.structure;
  const nodeCols = useMemo<ColumnDef<StructureNode>[]>(
    () => [
      { id: "name", header: "node", accessorKey: "name" },
      { id: "rail", header: "rail", accessorFn: (r) => (r.rail ? "rail" : "") },
      { id: "degree", header: "degree", accessorKey: "degree" },
      {
        id: "elements",
        header: "devices and injects at the node",
        accessorFn: (r) => r.elements.join(", ") + (r.more ? ` and ${r.more.toLocaleString("en-US")} more` : ""),
        cell: (c) => <span className="font-mono text-xs">{c.getValue<string>()}</span>,
      },
    ],
    [],
  );
  const devCols = useMemo<ColumnDef<StructureDevice>[]>(
    () => [
      { id: "name", header: "device", accessorKey: "name" },
      { id: "type", header: "type", accessorKey: "type" },
      { id: "gate", header: "gate", accessorKey: "gate" },
      { id: "source", header: "source", accessorKey: "source" },
      { id: "drain", header: "drain", accessorKey: "drain" },
      { id: "bulk", header: "bulk / well", accessorKey: "bulk" },
    ],
    [],
  );
  if (error) return <p className="text-sm text-ember-500">{(error as Error).message}</p>;
  if (!s) return <p className="text-sm text-stone-500">{isLoading ? "Reading the structure…" : ""}</p>;
  const graph = all.data?.structure.graph ?? null;
  return (
    <section aria-label="Structure" className="space-y-4" data-slot="structure">
      <div className="flex flex-wrap items-center gap-3 text-sm">
        <input
          type="search"
          value={query}
          onChange={(e) => setQuery(e.target.value)}
          placeholder="Search nodes and devices"
          aria-label="Search the structure"
          className="w-64 max-w-full rounded border border-stone-300 bg-white px-2 py-1"
        />
        <span className="text-stone-500">
          commit <span className="font-mono">{commitId.slice(0, 8)}</span> · {s.nodes.total.toLocaleString("en-US")}{" "}
          nodes · {s.devices.total.toLocaleString("en-US")} devices
          {s.injects.length ? ` · ${s.injects.length} injects` : ""}
        </span>
      </div>
      {graph ? (
        <StructureGraph graph={graph} highlight={q} onPick={setQuery} title={`Structure of ${title}`} />
      ) : (
        <p className="text-xs text-stone-500">
          Drawn for networks of at most 400 devices; this one has {s.devices.total.toLocaleString("en-US")}: search the
          tables instead.
        </p>
      )}
      <div className="grid grid-cols-1 gap-6">
        <StructureTable
          heading="Nodes"
          label="Nodes and their devices"
          rows={s.nodes.rows}
          matched={s.nodes.matched}
          columns={nodeCols}
          query={query}
          onQuery={setQuery}
        />
        <StructureTable
          heading="Devices"
          label="Devices and their nodes"
          rows={s.devices.rows}
          matched={s.devices.matched}
          columns={devCols}
          query={query}
          onQuery={setQuery}
        />
      </div>
    </section>
  );
}
