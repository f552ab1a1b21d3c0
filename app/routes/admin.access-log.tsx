import type { ColumnDef } from "@tanstack/react-table";
import { Form } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ServerTable } from "~/components/server-table";
import { formatInstant } from "~/dates";
import { answerUserErrors } from "~/forms.server";
import { type AccessLogRow, listAccessLog } from "~/models/access-log.server";
import { viewerTimeZone } from "~/models/sites.server";
import { accessLogFilterSchema } from "~/schemas/admin";
import { readTableQuery } from "~/schemas/table-query";
import type { Route } from "./+types/admin.access-log";

export const meta: Route.MetaFunction = () => [{ title: "Access log · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  return answerUserErrors(async () => {
    const p = await requireUser(request, "admin.accesslog");
    const url = new URL(request.url);
    const q = readTableQuery(url);
    const parsed = accessLogFilterSchema.safeParse(Object.fromEntries(url.searchParams.entries()));
    const filters = parsed.success ? parsed.data : {};
    const page = await listAccessLog({ ...q, dir: url.searchParams.has("dir") ? q.dir : "desc" }, filters);
    return {
      page,
      filters,
      filterError: parsed.success ? null : "A filter value was not understood and was ignored (dates as YYYY-MM-DD).",
      search: url.search,
      timeZone: await viewerTimeZone(p),
    };
  });
}

const columnsIn = (zone: string): ColumnDef<AccessLogRow, unknown>[] => [
  { id: "at", header: `When (${zone})`, cell: ({ row }) => formatInstant(row.original.at, zone) },
  { id: "actor", header: "Who", cell: ({ row }) => row.original.actor },
  { id: "role", header: "Role", cell: ({ row }) => row.original.actorRole ?? "—" },
  { id: "worker", header: "Worker", cell: ({ row }) => row.original.employeeNumber },
  { id: "resource", header: "What", cell: ({ row }) => `${row.original.resource} (${row.original.action})` },
  { id: "route", header: "Where", cell: ({ row }) => <code className="text-xs">{row.original.route}</code> },
];

export default function AdminAccessLog({ loaderData }: Route.ComponentProps) {
  const { page, filters, filterError, search, timeZone } = loaderData;
  const columns = columnsIn(timeZone);
  const f = filters as Record<string, string | undefined>;
  return (
    <div className="grid gap-6">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <h1 className="page-title">Access log</h1>
        <a className="btn-quiet" href={`/admin/access-log/export.xlsx${search}`} download>
          Export to XLSX
        </a>
      </div>
      <p className="text-ink-soft">
        Every read of a worker's health data by staff or by an API key. Workers see their own entries.
      </p>
      {filterError && (
        <p role="alert" className="rounded bg-amber-wash p-2 text-amber-caution">
          {filterError}
        </p>
      )}
      <Form method="get" className="card grid gap-3 sm:grid-cols-5 sm:items-end">
        <div>
          <label className="field-label" htmlFor="f-worker">
            Employee number
          </label>
          <input id="f-worker" name="worker" defaultValue={f.worker ?? ""} className="field-input" />
        </div>
        <div>
          <label className="field-label" htmlFor="f-actor">
            Staff name or e-mail
          </label>
          <input id="f-actor" name="actor" defaultValue={f.actor ?? ""} className="field-input" />
        </div>
        <div>
          <label className="field-label" htmlFor="f-from">
            From
          </label>
          <input id="f-from" name="from" type="date" defaultValue={f.from ?? ""} className="field-input" />
        </div>
        <div>
          <label className="field-label" htmlFor="f-to">
            To
          </label>
          <input id="f-to" name="to" type="date" defaultValue={f.to ?? ""} className="field-input" />
        </div>
        <button type="submit" className="btn-primary">
          Apply filters
        </button>
      </Form>
      <ServerTable
        caption="Access log"
        columns={columns}
        rows={page.rows}
        total={page.total}
        page={page.page}
        size={page.size}
        sort={page.sort}
        dir={page.dir}
        sortable={["at", "worker", "resource"]}
        emptyText="No reads of health data recorded for these filters."
      />
    </div>
  );
}
