import { flexRender, type Table } from "@tanstack/react-table";

/**
 * The head of a TanStack table: a button per sortable column that says its order in words to
 * screen readers (`aria-sort`) and as a mark to everyone; columns with `meta: { numeric: true }`
 * align right. Every table of the app uses it, so sorting looks and reads the same everywhere.
 */
export function SortableHead<T>({ table }: { table: Table<T> }) {
  return (
    <thead className="border-b border-rule bg-paper/60 text-ink-soft">
      {table.getHeaderGroups().map((group) => (
        <tr key={group.id}>
          {group.headers.map((header) => {
            const sorted = header.column.getIsSorted();
            const numeric = (header.column.columnDef.meta as { numeric?: boolean } | undefined)?.numeric;
            return (
              <th
                key={header.id}
                scope="col"
                aria-sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : undefined}
                className={`px-3 py-2 font-semibold whitespace-nowrap ${numeric ? "text-right" : ""}`}
              >
                {header.column.getCanSort() ? (
                  <button type="button" onClick={header.column.getToggleSortingHandler()} className="inline-flex items-center gap-1 hover:text-ink">
                    {flexRender(header.column.columnDef.header, header.getContext())}
                    <span aria-hidden="true" className="font-mono text-[10px]">
                      {sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "△▽"}
                    </span>
                  </button>
                ) : (
                  flexRender(header.column.columnDef.header, header.getContext())
                )}
              </th>
            );
          })}
        </tr>
      ))}
    </thead>
  );
}
