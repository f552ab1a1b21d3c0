import type { Knex } from "knex";
import { UserError } from "~/errors";
import type { TableQuery } from "~/schemas/table-query";

export interface Page<T> {
  rows: T[];
  total: number;
  page: number;
  size: number;
  sort: string;
  dir: "asc" | "desc";
}

// Applies a whitelisted sort, then counts and pages in SQL. `sortable` maps public column ids to SQL columns;
// `tieBreaker` is a unique column of the listed table (its id), sorted after the chosen column so that rows with
// equal sort values keep one order on every engine and no row repeats or goes missing between pages.
export async function paged<T>(
  query: Knex.QueryBuilder,
  q: TableQuery,
  sortable: Record<string, string>,
  defaultSort: string,
  tieBreaker: string,
  map: (row: Record<string, unknown>) => T,
): Promise<Page<T>> {
  // Own keys only: "__proto__" or "constructor" must not find Object.prototype's members.
  if (q.sort && !Object.hasOwn(sortable, q.sort))
    throw new UserError(`Sort: not a column of this list; use one of ${Object.keys(sortable).join(", ")}.`, {
      field: "sort",
    });
  const sort = q.sort ?? defaultSort;
  const countRow = await query.clone().clearSelect().clearOrder().count<{ n: number | string }[]>({ n: "*" }).first();
  const total = Number(countRow?.n ?? 0);
  const lastPage = Math.max(1, Math.ceil(total / q.size));
  const page = Math.min(q.page, lastPage);
  const rows = await query
    .clone()
    .orderBy([
      { column: sortable[sort], order: q.dir },
      { column: tieBreaker, order: q.dir },
    ])
    .limit(q.size)
    .offset((page - 1) * q.size);
  return { rows: rows.map(map), total, page, size: q.size, sort, dir: q.dir };
}
