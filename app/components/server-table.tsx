import { type ColumnDef, flexRender, getCoreRowModel, useReactTable } from "@tanstack/react-table";
import { Form, Link, useLocation, useNavigation } from "react-router";

// TanStack Table in manual mode: sorting, filtering and paging are done by the loader; this component
// only renders and writes the table state into the URL.
export interface ServerTableProps<T> {
  caption: string;
  columns: ColumnDef<T, unknown>[];
  rows: T[];
  total: number;
  page: number;
  size: number;
  sort: string;
  dir: "asc" | "desc";
  sortable: string[];
  searchLabel?: string;
  q?: string;
  emptyText?: string;
}

function hrefWith(search: string, changes: Record<string, string | null>): string {
  const p = new URLSearchParams(search);
  for (const [k, v] of Object.entries(changes)) {
    if (v === null) p.delete(k);
    else p.set(k, v);
  }
  return `?${p.toString()}`;
}

export function ServerTable<T>(props: ServerTableProps<T>) {
  const { caption, columns, rows, total, page, size, sort, dir, sortable, searchLabel, q, emptyText } = props;
  const location = useLocation();
  const navigation = useNavigation();
  const table = useReactTable({
    data: rows,
    columns,
    getCoreRowModel: getCoreRowModel(),
    manualSorting: true,
    manualPagination: true,
    manualFiltering: true,
  });
  const lastPage = Math.max(1, Math.ceil(total / size));
  const from = total === 0 ? 0 : (page - 1) * size + 1;
  const to = Math.min(total, page * size);
  return (
    <div className="card overflow-hidden p-0">
      {searchLabel && (
        <Form method="get" role="search" className="flex flex-wrap items-end gap-2 border-b border-line p-3">
          <div className="grow">
            <label htmlFor="table-q" className="field-label">
              {searchLabel}
            </label>
            <input id="table-q" name="q" defaultValue={q ?? ""} className="field-input" type="search" />
          </div>
          <input type="hidden" name="sort" value={sort} />
          <input type="hidden" name="dir" value={dir} />
          <button className="btn-quiet" type="submit">
            Filter
          </button>
        </Form>
      )}
      <section
        className="overflow-x-auto"
        tabIndex={0}
        aria-label={`${caption} (scrolls sideways)`}
        aria-busy={navigation.state === "loading"}
      >
        <table className="table-base">
          <caption className="sr-only">{caption}</caption>
          <thead>
            {table.getHeaderGroups().map((hg) => (
              <tr key={hg.id}>
                {hg.headers.map((h) => {
                  const id = h.column.id;
                  const isSorted = sort === id;
                  const label = flexRender(h.column.columnDef.header, h.getContext());
                  return (
                    <th
                      key={h.id}
                      scope="col"
                      aria-sort={isSorted ? (dir === "asc" ? "ascending" : "descending") : undefined}
                    >
                      {sortable.includes(id) ? (
                        <Link
                          className="inline-flex min-h-11 items-center gap-1 underline-offset-2 hover:underline"
                          to={hrefWith(location.search, {
                            sort: id,
                            dir: isSorted && dir === "asc" ? "desc" : "asc",
                            page: "1",
                          })}
                        >
                          {label}
                          <span aria-hidden="true">{isSorted ? (dir === "asc" ? "▲" : "▼") : "↕"}</span>
                        </Link>
                      ) : (
                        label
                      )}
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {table.getRowModel().rows.length === 0 ? (
              <tr>
                <td colSpan={columns.length} className="py-6 text-center text-ink-soft">
                  {emptyText ?? "Nothing to show."}
                </td>
              </tr>
            ) : (
              table.getRowModel().rows.map((r) => (
                <tr key={r.id}>
                  {r.getVisibleCells().map((c) => (
                    <td key={c.id}>{flexRender(c.column.columnDef.cell, c.getContext())}</td>
                  ))}
                </tr>
              ))
            )}
          </tbody>
        </table>
      </section>
      <nav
        aria-label={`${caption} pages`}
        className="flex flex-wrap items-center justify-between gap-2 border-t border-line p-3 text-sm"
      >
        <span>
          {from}–{to} of {total}
        </span>
        <span className="flex gap-2">
          {page > 1 ? (
            <Link className="btn-quiet" to={hrefWith(location.search, { page: String(page - 1) })}>
              Previous
            </Link>
          ) : (
            <span className="btn-quiet opacity-50" aria-disabled="true">
              Previous
            </span>
          )}
          <span className="self-center">
            Page {page} of {lastPage}
          </span>
          {page < lastPage ? (
            <Link className="btn-quiet" to={hrefWith(location.search, { page: String(page + 1) })}>
              Next
            </Link>
          ) : (
            <span className="btn-quiet opacity-50" aria-disabled="true">
              Next
            </span>
          )}
        </span>
      </nav>
    </div>
  );
}
