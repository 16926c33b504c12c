import {
  createColumnHelper,
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnFiltersState,
  type FilterFn,
  type SortingState,
} from "@tanstack/react-table";
import { useMemo, useState, type FormEvent } from "react";
import { SortableHead } from "../../components/table";
import { Link } from "react-router";
import type { ImportJobView, RecordingSummary } from "../../../shared/api/recordings";
import { Button, ErrorNote } from "../../components/ui";
import { ConfirmButton, Empty, RecordingStatus } from "./components";
import { formatBytes, formatCreated, formatDuration, formatRate, percent } from "./format";
import { useDeleteRecording, useRenameRecording } from "./queries";

export const SOURCE_WORDS: Record<RecordingSummary["source"], string> = {
  file: "Panelproof file",
  csv: "CSV",
  capture: "live capture",
  scenario: "scenario",
};

const column = createColumnHelper<RecordingSummary>();

const textFilter: FilterFn<RecordingSummary> = (row, _columnId, needle: string) => {
  const q = needle.trim().toLowerCase();
  if (!q) return true;
  const r = row.original;
  return [r.name, r.airframeName, SOURCE_WORDS[r.source], r.createdBy ?? ""].some((s) => s.toLowerCase().includes(q));
};

interface Props {
  workshopId: string;
  recordings: RecordingSummary[];
  imports: ImportJobView[];
  canWrite: boolean;
}

/** Every recording of the workshop: sortable columns, a text filter and airframe and source choices. */
export function RecordingsTable({ workshopId, recordings, imports, canWrite }: Props) {
  const [sorting, setSorting] = useState<SortingState>([{ id: "createdAt", desc: true }]);
  const [globalFilter, setGlobalFilter] = useState("");
  const [columnFilters, setColumnFilters] = useState<ColumnFiltersState>([]);
  const [renaming, setRenaming] = useState<string | null>(null);
  const rename = useRenameRecording(workshopId);
  const remove = useDeleteRecording(workshopId);

  // Import rows carry the job's id; its progress comes from the imports list.
  const importOf = useMemo(() => new Map(imports.map((j) => [j.id, j])), [imports]);
  const airframes = useMemo(() => [...new Set(recordings.map((r) => r.airframeName))].sort(), [recordings]);
  const sources = useMemo(() => [...new Set(recordings.map((r) => r.source))].sort(), [recordings]);

  const columns = useMemo(
    () => [
      column.accessor("name", {
        header: "Name",
        cell: (c) =>
          c.row.original.importId ? (
            // An import, not (yet) a recording: nothing to open.
            <span className="inline-block min-w-32 font-semibold text-ink-soft">{c.getValue()}</span>
          ) : renaming === c.row.original.id ? (
            <RenameForm
              initial={c.getValue()}
              busy={rename.isPending}
              onCancel={() => setRenaming(null)}
              onSave={(name) => rename.mutate({ recordingId: c.row.original.id, name }, { onSuccess: () => setRenaming(null) })}
            />
          ) : (
            <Link to={`/w/${workshopId}/recordings/${c.row.original.id}`} className="inline-block min-w-32 font-semibold text-ink underline decoration-amber/60 underline-offset-2 hover:decoration-amber">
              {c.getValue()}
            </Link>
          ),
      }),
      column.accessor("status", {
        header: "Status",
        cell: (c) => {
          const r = c.row.original;
          const job = r.importId ? importOf.get(r.importId) : undefined;
          if (r.status === "importing") return <RecordingStatus status="importing">{job ? `${percent(job.bytesRead, job.bytesTotal)}%` : null}</RecordingStatus>;
          if (r.status === "failed") {
            return (
              <span className="flex max-w-md flex-col gap-0.5" data-testid="recording-failure">
                <RecordingStatus status="failed">nothing was kept</RecordingStatus>
                {r.failure && (
                  <span className="text-xs">
                    <span className="font-semibold">Where: </span>
                    <span className="font-mono">{r.failure.where ?? "the whole file"}</span>
                    <span className="font-semibold"> · Why: </span>
                    {r.failure.message}
                  </span>
                )}
              </span>
            );
          }
          return <RecordingStatus status="ready" />;
        },
      }),
      column.accessor("airframeName", { header: "Airframe", filterFn: "equalsString" }),
      column.accessor("source", {
        header: "Source",
        filterFn: "equalsString",
        cell: (c) => <span className="whitespace-nowrap">{SOURCE_WORDS[c.getValue()]}</span>,
      }),
      column.accessor("durationMs", {
        header: "Duration",
        cell: (c) => <span className="font-mono">{formatDuration(c.getValue())}</span>,
        meta: { numeric: true },
      }),
      column.accessor("frameRate", {
        header: "Frame rate",
        cell: (c) => <span className="font-mono">{formatRate(c.getValue())}</span>,
        meta: { numeric: true },
      }),
      column.accessor("sizeBytes", {
        header: "Size",
        cell: (c) => <span className="font-mono">{formatBytes(c.getValue())}</span>,
        meta: { numeric: true },
      }),
      column.accessor((r) => r.createdBy ?? "", { id: "createdBy", header: "Created by", cell: (c) => c.getValue() || "–" }),
      column.accessor("createdAt", {
        header: "Created",
        cell: (c) => <span className="whitespace-nowrap">{formatCreated(c.getValue())}</span>,
      }),
      ...(canWrite
        ? [
            column.display({
              id: "actions",
              header: () => <span className="sr-only">Actions</span>,
              cell: (c) =>
                c.row.original.importId ? null : (
                  <span className="flex justify-end gap-2">
                    {renaming !== c.row.original.id && (
                      <Button className="px-2 py-1 text-xs" onClick={() => setRenaming(c.row.original.id)} aria-label={`Rename ${c.row.original.name}`}>
                        Rename
                      </Button>
                    )}
                    <ConfirmButton
                      small
                      label="Delete"
                      question={`Delete “${c.row.original.name}”?`}
                      confirmLabel="Delete for good"
                      busy={remove.isPending}
                      onConfirm={() => remove.mutate(c.row.original.id)}
                    />
                  </span>
                ),
            }),
          ]
        : []),
    ],
    [workshopId, canWrite, renaming, rename, remove, importOf],
  );

  const table = useReactTable({
    data: recordings,
    columns,
    state: { sorting, globalFilter, columnFilters },
    onSortingChange: setSorting,
    onGlobalFilterChange: setGlobalFilter,
    onColumnFiltersChange: setColumnFilters,
    globalFilterFn: textFilter,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
    getRowId: (r) => r.id,
  });

  const filterValue = (id: string) => (columnFilters.find((f) => f.id === id)?.value as string | undefined) ?? "";
  const setFilter = (id: string, value: string) =>
    setColumnFilters((old) => [...old.filter((f) => f.id !== id), ...(value ? [{ id, value }] : [])]);

  if (recordings.length === 0) {
    return (
      <Empty>
        No recordings yet.{" "}
        {canWrite ? "Upload a file, compose a scenario or capture a flight to start." : "Builders of this workshop add them; you will see them here."}
      </Empty>
    );
  }

  const rows = table.getRowModel().rows;
  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end gap-3" role="search" aria-label="Filter recordings">
        <label className="flex flex-col gap-1 text-sm font-semibold">
          Find
          <input
            type="search"
            value={globalFilter}
            onChange={(e) => setGlobalFilter(e.target.value)}
            placeholder="name, airframe, person"
            className="w-64 rounded-md border border-rule bg-card px-3 py-1.5 font-normal"
          />
        </label>
        <label className="flex flex-col gap-1 text-sm font-semibold">
          Airframe
          <select value={filterValue("airframeName")} onChange={(e) => setFilter("airframeName", e.target.value)} className="rounded-md border border-rule bg-card px-2 py-1.5 font-normal">
            <option value="">every airframe</option>
            {airframes.map((a) => (
              <option key={a} value={a}>
                {a}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 text-sm font-semibold">
          Source
          <select value={filterValue("source")} onChange={(e) => setFilter("source", e.target.value)} className="rounded-md border border-rule bg-card px-2 py-1.5 font-normal">
            <option value="">every source</option>
            {sources.map((s) => (
              <option key={s} value={s}>
                {SOURCE_WORDS[s]}
              </option>
            ))}
          </select>
        </label>
        <p className="ml-auto text-sm text-ink-soft" role="status">
          {rows.length === recordings.length
            ? countWords(recordings)
            : `${rows.length} of ${recordings.length} rows`}
        </p>
      </div>
      <ErrorNote error={rename.error ?? remove.error} />
      <div className="overflow-x-auto rounded-lg border border-rule bg-card">
        <table className="w-full text-left text-sm" aria-label="Recordings">
          <SortableHead table={table} />
          <tbody>
            {rows.map((row) => (
              <tr key={row.id} className="border-b border-rule/60 last:border-0 hover:bg-paper/50">
                {row.getVisibleCells().map((cell) => {
                  const numeric = (cell.column.columnDef.meta as { numeric?: boolean } | undefined)?.numeric;
                  return (
                    <td key={cell.id} className={`px-3 py-2 align-middle ${numeric ? "text-right whitespace-nowrap" : ""}`}>
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  );
                })}
              </tr>
            ))}
            {rows.length === 0 && (
              <tr>
                <td colSpan={columns.length} className="px-3 py-6 text-center text-ink-soft">
                  No recording matches these filters.
                </td>
              </tr>
            )}
          </tbody>
        </table>
      </div>
    </div>
  );
}

/** "3 recordings · 1 import": rows of imports (running or failed) are not recordings. */
function countWords(rows: RecordingSummary[]): string {
  const imports = rows.filter((r) => r.importId).length;
  const recordings = rows.length - imports;
  const words = `${recordings} ${recordings === 1 ? "recording" : "recordings"}`;
  return imports > 0 ? `${words} · ${imports} ${imports === 1 ? "import" : "imports"}` : words;
}

function RenameForm({ initial, busy, onSave, onCancel }: { initial: string; busy: boolean; onSave: (name: string) => void; onCancel: () => void }) {
  const [name, setName] = useState(initial);
  function submit(e: FormEvent) {
    e.preventDefault();
    if (name.trim()) onSave(name.trim());
  }
  return (
    <form onSubmit={submit} className="flex items-center gap-2" aria-label="Rename recording">
      <input
        autoFocus
        aria-label="New name"
        value={name}
        maxLength={120}
        onChange={(e) => setName(e.target.value)}
        onKeyDown={(e) => e.key === "Escape" && onCancel()}
        className="w-48 rounded border border-rule bg-card px-2 py-1"
      />
      <Button type="submit" tone="primary" className="px-2 py-1 text-xs" disabled={busy || !name.trim()}>
        Save
      </Button>
      <Button type="button" className="px-2 py-1 text-xs" onClick={onCancel}>
        Cancel
      </Button>
    </form>
  );
}
