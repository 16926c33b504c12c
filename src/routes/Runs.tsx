import { createColumnHelper, flexRender, getCoreRowModel, getSortedRowModel, useReactTable, type SortingState } from "@tanstack/react-table";
import { useMemo, useState } from "react";
import { SortableHead } from "../components/table";
import { Link, useOutletContext } from "react-router";
import type { RunSummary } from "../../shared/api/runs";
import type { WorkshopDetail } from "../../shared/api/workshops";
import { ErrorNote, Loading } from "../components/ui";
import { formatCreated } from "../features/recordings/format";
import { usePanels } from "../features/panels/queries";
import { useRuns } from "../features/runs/queries";
import { Empty, StateTag } from "../features/runs/words";

const col = createColumnHelper<RunSummary>();

/** The workshop's runs: what was replayed into which panels, and how it went. */
export function Runs() {
  const w = useOutletContext<WorkshopDetail>();
  const canWrite = w.abilities.includes("bench.write");
  const runs = useRuns(w.id);
  const panels = usePanels(w.id);
  const [sorting, setSorting] = useState<SortingState>([{ id: "createdAt", desc: true }]);
  const panelName = useMemo(() => new Map((panels.data ?? []).map((p) => [p.id, p.name])), [panels.data]);

  const columns = useMemo(
    () => [
      col.accessor("name", {
        header: "Run",
        cell: (c) => (
          <Link to={`/w/${w.id}/runs/${c.row.original.id}`} className="font-semibold text-calm underline">
            {c.getValue()}
          </Link>
        ),
      }),
      col.accessor("recordingName", { header: "Recording" }),
      col.accessor((r) => r.panelIds.map((id) => panelName.get(id) ?? id).join(", "), { id: "panels", header: "Panels" }),
      col.accessor("state", { header: "State", cell: (c) => <StateTag state={c.getValue()} /> }),
      col.accessor((r) => r.counts.pass ?? 0, { id: "pass", header: "● Passed", meta: { numeric: true } }),
      col.accessor((r) => r.counts.fail ?? 0, { id: "fail", header: "✕ Failed", meta: { numeric: true } }),
      col.accessor("createdAt", { header: "Created", cell: (c) => formatCreated(c.getValue()) }),
      col.display({
        id: "report",
        header: "",
        cell: (c) => (
          <Link to={`/w/${w.id}/runs/${c.row.original.id}/report`} className="text-calm underline">
            Report
          </Link>
        ),
      }),
    ],
    [w.id, panelName],
  );
  const table = useReactTable({
    data: runs.data ?? [],
    columns,
    state: { sorting },
    onSortingChange: setSorting,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getRowId: (r) => r.id,
  });

  return (
    <div className="flex flex-col gap-4">
      <div className="flex items-center justify-between gap-3">
        <h2 className="text-xl font-semibold">Runs</h2>
        {canWrite && (
          <Link to={`/w/${w.id}/runs/new`} className="rounded-md border border-bezel bg-bezel px-3.5 py-2 text-sm font-semibold text-dial">
            Set up a run
          </Link>
        )}
      </div>
      {runs.isPending && <Loading what="Reading the runs" />}
      <ErrorNote error={runs.error} />
      {runs.data && runs.data.length === 0 && <Empty>No runs yet. {canWrite ? "Set up a run to replay a recording into your panels." : ""}</Empty>}
      {runs.data && runs.data.length > 0 && (
        <div className="overflow-x-auto rounded-lg border border-rule bg-card">
          <table className="w-full text-left text-sm" aria-label="Runs">
            <SortableHead table={table} />
            <tbody>
              {table.getRowModel().rows.map((row) => (
                <tr key={row.id} className="border-b border-rule/60 last:border-0 hover:bg-paper/50">
                  {row.getVisibleCells().map((cell) => (
                    <td key={cell.id} className="px-3 py-2 align-middle">
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
