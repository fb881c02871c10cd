"use client";

/**
 * A results table (TanStack Table v8): click a header to sort, type to filter
 * by name, page through large tables. Columns carry their own cell formatter,
 * so values stay numbers for sorting and show in engineering notation.
 */
import {
  type ColumnDef,
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getPaginationRowModel,
  getSortedRowModel,
  type SortingState,
  useReactTable,
} from "@tanstack/react-table";
import { useState } from "react";

export interface DataTableProps<T> {
  label: string;
  rows: T[];
  columns: ColumnDef<T>[];
  /** Placeholder of the filter box. */
  filterPlaceholder?: string;
  pageSize?: number;
  /** Row class (e.g. to flag a device outside weak inversion). */
  rowClass?(row: T): string;
  /** The filter text, when the caller controls it (e.g. a warning's link filters the devices); else the table keeps its own. */
  filter?: string;
  onFilterChange?(text: string): void;
  /** Whether a row passes the filter text; default: its first column contains the text (ignoring case). */
  matches?(row: T, text: string): boolean;
}

export function DataTable<T>({
  label,
  rows,
  columns,
  filterPlaceholder = "Filter by name",
  pageSize = 25,
  rowClass,
  filter: controlled,
  onFilterChange,
  matches,
}: DataTableProps<T>) {
  const [sorting, setSorting] = useState<SortingState>([]);
  const [own, setOwn] = useState("");
  const filter = controlled ?? own;
  const setFilter = (text: string) => (onFilterChange ? onFilterChange(text) : setOwn(text));
  const table = useReactTable({
    data: rows,
    columns,
    state: { sorting, globalFilter: filter },
    onSortingChange: setSorting,
    onGlobalFilterChange: setFilter,
    globalFilterFn: (row, _id, value: string) =>
      matches
        ? matches(row.original, value)
        : String(row.getValue(columns[0].id ?? "name"))
            .toLowerCase()
            .includes(value.toLowerCase()),
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    getPaginationRowModel: getPaginationRowModel(),
    initialState: { pagination: { pageSize } },
  });
  const page = table.getState().pagination;
  const count = table.getFilteredRowModel().rows.length;
  return (
    <div className="space-y-2">
      <div className="flex flex-wrap items-center gap-3 text-sm">
        <input
          type="search"
          value={filter}
          onChange={(e) => setFilter(e.target.value)}
          placeholder={filterPlaceholder}
          aria-label={`${label}: ${filterPlaceholder}`}
          className="w-56 rounded border border-stone-300 bg-white px-2 py-1"
        />
        <span className="text-stone-500">
          {count.toLocaleString("en-US")} {count === 1 ? "row" : "rows"}
        </span>
      </div>
      <div className="overflow-x-auto rounded border border-stone-200 bg-white">
        <table aria-label={label} className="tabular w-full text-sm">
          <thead className="bg-stone-50 text-left text-xs text-stone-600">
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id}>
                {hg.headers.map((h) => {
                  const sorted = h.column.getIsSorted();
                  return (
                    <th
                      key={h.id}
                      className="px-3 py-2 font-medium"
                      aria-sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : undefined}
                    >
                      <button
                        type="button"
                        onClick={h.column.getToggleSortingHandler()}
                        className="flex items-center gap-1 hover:text-moss-700"
                      >
                        {flexRender(h.column.columnDef.header, h.getContext())}
                        <span aria-hidden className="text-stone-400">
                          {sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : ""}
                        </span>
                      </button>
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.map((r) => (
              <tr key={r.id} className={`border-t border-stone-100 ${rowClass ? rowClass(r.original) : ""}`}>
                {r.getVisibleCells().map((c) => (
                  <td key={c.id} className="px-3 py-1.5 whitespace-nowrap">
                    {flexRender(c.column.columnDef.cell, c.getContext())}
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {table.getPageCount() > 1 ? (
        <div className="flex items-center gap-2 text-sm">
          <button
            type="button"
            className="rounded border border-stone-300 px-2 py-0.5 disabled:opacity-40"
            onClick={() => table.previousPage()}
            disabled={!table.getCanPreviousPage()}
          >
            Previous
          </button>
          <span className="text-stone-600">
            page {page.pageIndex + 1} of {table.getPageCount()}
          </span>
          <button
            type="button"
            className="rounded border border-stone-300 px-2 py-0.5 disabled:opacity-40"
            onClick={() => table.nextPage()}
            disabled={!table.getCanNextPage()}
          >
            Next
          </button>
        </div>
      ) : null}
    </div>
  );
}
