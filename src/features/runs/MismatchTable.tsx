import {
  createColumnHelper,
  flexRender,
  getCoreRowModel,
  useReactTable,
  type ColumnFiltersState,
  type SortingState,
} from "@tanstack/react-table";
import { memo, useMemo, useState } from "react";
import { SortableHead } from "../../components/table";
import { MISMATCH_KINDS } from "../../../shared/compare/types";
import type { LiveMismatch } from "./live";
import { clock, Empty, MISMATCH_WORDS } from "./words";
import { lazyLayout } from "./lazy-layout";

const col = createColumnHelper<LiveMismatch>();

/**
 * Every mismatch kept: sortable, filtered by element and kind, shown a page at a time (a run may
 * keep 10,000 and the page must stay quick); a click seeks there when allowed. Memoized: the report
 * page moves its instant often and this table does not show it.
 */
export const MismatchTable = memo(function MismatchTable({
  mismatches,
  labels,
  onSeek,
  pageSize = 50,
}: {
  mismatches: LiveMismatch[];
  labels: Record<string, string>;
  onSeek?: (ms: number) => void;
  pageSize?: number;
}) {
  const [sorting, setSorting] = useState<SortingState>([{ id: "startMs", desc: false }]);
  const [filters, setFilters] = useState<ColumnFiltersState>([]);
  const [pagination, setPagination] = useState({ pageIndex: 0, pageSize });
  const columns = useMemo(
    () => [
      col.accessor("startMs", { header: "From", cell: (c) => clock(c.getValue()) }),
      col.accessor("endMs", { header: "To", cell: (c) => clock(c.getValue()) }),
      col.accessor("elementId", { header: "Element", filterFn: "equals", cell: (c) => labels[c.getValue()] ?? c.getValue() }),
      col.accessor("kind", { header: "Kind", filterFn: "equals", cell: (c) => MISMATCH_WORDS[c.getValue()] ?? c.getValue() }),
      col.accessor("expected", { header: "Expected" }),
      col.accessor("seen", { header: "Seen" }),
      col.accessor("worstError", { header: "Worst", cell: (c) => Math.round(c.getValue() * 10) / 10 }),
    ],
    [labels],
  );
  const elementFilter = (filters.find((f) => f.id === "elementId")?.value as string | undefined) ?? "";
  const kindFilter = (filters.find((f) => f.id === "kind")?.value as string | undefined) ?? "";
  // Filtering, sorting and paging are done here on plain arrays and TanStack Table gets only the
  // page shown: with 10,000 mismatches its row models (a row object per mismatch, rebuilt per
  // change) cost more than the page's whole first paint may.
  const filtered = useMemo(
    () => (elementFilter || kindFilter ? mismatches.filter((m) => (!elementFilter || m.elementId === elementFilter) && (!kindFilter || m.kind === kindFilter)) : mismatches),
    [mismatches, elementFilter, kindFilter],
  );
  const sorted = useMemo(() => {
    const by = sorting[0];
    if (!by) return filtered;
    const key = by.id as keyof LiveMismatch;
    const direction = by.desc ? -1 : 1;
    return [...filtered].sort((a, b) => {
      const x = a[key] ?? "";
      const y = b[key] ?? "";
      return (x < y ? -1 : x > y ? 1 : 0) * direction || a.startMs - b.startMs;
    });
  }, [filtered, sorting]);
  const pages = Math.max(1, Math.ceil(sorted.length / pagination.pageSize));
  const pageIndex = Math.min(pagination.pageIndex, pages - 1);
  const pageRows = useMemo(() => sorted.slice(pageIndex * pagination.pageSize, (pageIndex + 1) * pagination.pageSize), [sorted, pageIndex, pagination.pageSize]);
  const table = useReactTable({
    data: pageRows,
    columns,
    state: { sorting, columnFilters: filters, pagination: { pageIndex, pageSize: pagination.pageSize } },
    manualSorting: true,
    manualFiltering: true,
    manualPagination: true,
    pageCount: pages,
    onSortingChange: (updater) => {
      setSorting(updater);
      setPagination((p) => ({ ...p, pageIndex: 0 }));
    },
    onColumnFiltersChange: setFilters,
    onPaginationChange: setPagination,
    getCoreRowModel: getCoreRowModel(),
  });
  const elements = useMemo(() => [...new Set(mismatches.map((m) => m.elementId))].sort(), [mismatches]);
  const value = (id: string) => (filters.find((f) => f.id === id)?.value as string | undefined) ?? "";
  const setFilter = (id: string, v: string) => {
    setFilters((old) => [...old.filter((f) => f.id !== id), ...(v ? [{ id, value: v }] : [])]);
    setPagination((p) => ({ ...p, pageIndex: 0 }));
  };

  if (mismatches.length === 0) return <Empty>No mismatch so far.</Empty>;
  const rows = table.getRowModel().rows;
  const matching = sorted.length;
  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end gap-3" role="search" aria-label="Filter mismatches">
        <label className="flex flex-col gap-1 text-sm font-semibold">
          Element
          <select value={value("elementId")} onChange={(e) => setFilter("elementId", e.target.value)} className="rounded-md border border-rule bg-card px-2 py-1.5 font-normal">
            <option value="">every element</option>
            {elements.map((id) => (
              <option key={id} value={id}>
                {labels[id] ?? id}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 text-sm font-semibold">
          Kind
          <select value={value("kind")} onChange={(e) => setFilter("kind", e.target.value)} className="rounded-md border border-rule bg-card px-2 py-1.5 font-normal">
            <option value="">every kind</option>
            {MISMATCH_KINDS.map((k) => (
              <option key={k} value={k}>
                {MISMATCH_WORDS[k]}
              </option>
            ))}
          </select>
        </label>
        <p className="ml-auto text-sm text-ink-soft" role="status">
          {matching === mismatches.length ? `${mismatches.length} ${mismatches.length === 1 ? "mismatch" : "mismatches"}` : `${matching} of ${mismatches.length} mismatches`}
        </p>
      </div>
      {/* Laid out only when scrolled near (a page of 50 rows is usually below the fold at first). */}
      <div className="overflow-x-auto rounded-lg border border-rule bg-card" style={lazyLayout(rows.length)}>
        <table className="w-full text-left text-sm" aria-label="Mismatches">
          <SortableHead table={table} />
          <tbody>
            {rows.map((row) => (
              <tr
                key={row.id}
                data-element={row.original.elementId}
                onClick={onSeek ? () => onSeek(row.original.startMs) : undefined}
                className={`border-b border-rule/60 last:border-0 hover:bg-paper/50 ${onSeek ? "cursor-pointer" : ""}`}
                title={onSeek ? "Go to this moment" : undefined}
              >
                {row.getVisibleCells().map((cell) => (
                  <td key={cell.id} className="px-3 py-2 align-middle">
                    {flexRender(cell.column.columnDef.cell, cell.getContext())}
                  </td>
                ))}
              </tr>
            ))}
            {rows.length === 0 && (
              <tr>
                <td colSpan={columns.length} className="px-3 py-6 text-center text-ink-soft">
                  No mismatch matches these filters.
                </td>
              </tr>
            )}
          </tbody>
        </table>
      </div>
      {pages > 1 && (
        <nav className="flex flex-wrap items-center gap-2 text-sm" aria-label="Mismatch pages">
          <button type="button" className="rounded-md border border-rule bg-card px-2.5 py-1 disabled:opacity-40" onClick={() => table.firstPage()} disabled={!table.getCanPreviousPage()}>
            « First
          </button>
          <button type="button" className="rounded-md border border-rule bg-card px-2.5 py-1 disabled:opacity-40" onClick={() => table.previousPage()} disabled={!table.getCanPreviousPage()}>
            ‹ Previous
          </button>
          <span role="status" aria-label="Mismatch page">
            page {pageIndex + 1} of {pages} · rows {pageIndex * pagination.pageSize + 1}–{Math.min(matching, (pageIndex + 1) * pagination.pageSize)}
          </span>
          <button type="button" className="rounded-md border border-rule bg-card px-2.5 py-1 disabled:opacity-40" onClick={() => table.nextPage()} disabled={!table.getCanNextPage()}>
            Next ›
          </button>
          <button type="button" className="rounded-md border border-rule bg-card px-2.5 py-1 disabled:opacity-40" onClick={() => table.lastPage()} disabled={!table.getCanNextPage()}>
            Last »
          </button>
        </nav>
      )}
    </div>
  );
});
