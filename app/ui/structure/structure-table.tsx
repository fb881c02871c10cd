"use client";

import type { ColumnDef } from "@tanstack/react-table";
import { DataTable } from "@/app/ui/workbench/data-table";

export interface StructureTableProps<T> {
  heading: string;
  label: string;
  /** The rows the server sent (at most its row limit) and how many matched the search. */
  rows: T[];
  matched: number;
  columns: ColumnDef<T>[];
  /** The search text, shared by both tables and sent to the server (the table does not filter again). */
  query: string;
  onQuery(text: string): void;
}

const ALL = () => true;

/** One table of the structure view, headed with its match count ("Nodes (11)", "…, first 500"). */
export function StructureTable<T>({ heading, label, rows, matched, columns, query, onQuery }: StructureTableProps<T>) {
  return (
    <div className="min-w-0 space-y-2">
      <h3 className="text-sm font-medium">
        {heading}{" "}
        <span className="font-normal text-stone-500">
          ({matched.toLocaleString("en-US")}
          {matched > rows.length ? `, first ${rows.length}` : ""})
        </span>
      </h3>
      <DataTable
        label={label}
        rows={rows}
        columns={columns}
        filter={query}
        onFilterChange={onQuery}
        matches={ALL}
        filterPlaceholder="Search nodes and devices"
        pageSize={15}
      />
    </div>
  );
}
