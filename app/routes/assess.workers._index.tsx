import type { ColumnDef } from "@tanstack/react-table";
import { Form, Link } from "react-router";
import { z } from "zod";
import { requireUser } from "~/auth/guard.server";
import { can } from "~/auth/permissions";
import { ConsentBadges, StageBadge } from "~/components/badges";
import { ServerTable } from "~/components/server-table";
import { STAGE_LABELS, STAGES } from "~/domain/stages";
import { answerUserErrors } from "~/forms.server";
import { listWorkers, type WorkerListRow } from "~/models/roster.server";
import { sitesInScope } from "~/models/sites.server";
import { idFilter, readTableQuery } from "~/schemas/table-query";
import type { Route } from "./+types/assess.workers._index";

export const meta: Route.MetaFunction = () => [{ title: "Workers · Limberly" }];

// Sorting, filtering and paging happen in SQL (listWorkers); only one page reaches the browser.
export async function loader({ request }: Route.LoaderArgs) {
  return answerUserErrors(async () => {
    const p = await requireUser(request, "workers.read");
    const q = readTableQuery(new URL(request.url), {
      site: idFilter("Site"),
      stage: z.enum(STAGES, { message: "Stage: choose a readiness stage from the list." }),
    });
    const [page, sites] = await Promise.all([listWorkers(p.scope, q, q.filters), sitesInScope(p.scope)]);
    return {
      page,
      q: q.q ?? "",
      filters: q.filters,
      sites,
      canOpen: can(p.user, "assessments.read"),
      canExport: can(p.user, "roster.import"),
    };
  });
}

export default function Workers({ loaderData }: Route.ComponentProps) {
  const { page, q, filters, sites, canOpen, canExport } = loaderData;
  const columns: ColumnDef<WorkerListRow, unknown>[] = [
    {
      id: "employeeNumber",
      header: "Employee no.",
      cell: ({ row }) =>
        canOpen ? (
          <Link className="font-medium text-spruce-700 underline" to={`/assess/workers/${row.original.id}`}>
            {row.original.employeeNumber}
          </Link>
        ) : (
          row.original.employeeNumber
        ),
    },
    { id: "name", header: "Name", cell: ({ row }) => row.original.name },
    { id: "site", header: "Site", cell: ({ row }) => row.original.site },
    { id: "department", header: "Department", cell: ({ row }) => row.original.department },
    { id: "stage", header: "Stage", cell: ({ row }) => <StageBadge stage={row.original.stage} /> },
    { id: "consent", header: "Consent", cell: ({ row }) => <ConsentBadges consent={row.original.consent} /> },
    { id: "lastBaseline", header: "Last baseline", cell: ({ row }) => row.original.lastBaseline ?? "—" },
  ];
  return (
    <div className="grid gap-4">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1 className="page-title">Workers</h1>
          <p className="text-ink-soft">
            Workers at your sites. Consent: ✓ given, ↻ renewal due, ✕ withdrawn, – not given.
          </p>
        </div>
        {canExport && (
          <a className="btn-quiet" href="/assess/roster/export.xlsx">
            Export roster (XLSX)
          </a>
        )}
      </div>
      <Form method="get" className="card flex flex-wrap items-end gap-3" aria-label="Filter workers">
        <div className="min-w-48 grow">
          <label htmlFor="w-q" className="field-label">
            Name or employee number
          </label>
          <input id="w-q" name="q" type="search" defaultValue={q} className="field-input" />
        </div>
        <div>
          <label htmlFor="w-site" className="field-label">
            Site
          </label>
          <select id="w-site" name="site" defaultValue={filters.site ?? ""} className="field-input">
            <option value="">All my sites</option>
            {sites.map((s) => (
              <option key={s.id} value={s.id}>
                {s.name}
              </option>
            ))}
          </select>
        </div>
        <div>
          <label htmlFor="w-stage" className="field-label">
            Stage
          </label>
          <select id="w-stage" name="stage" defaultValue={filters.stage ?? ""} className="field-input">
            <option value="">Any stage</option>
            {STAGES.map((s) => (
              <option key={s} value={s}>
                {STAGE_LABELS[s]}
              </option>
            ))}
          </select>
        </div>
        <input type="hidden" name="sort" value={page.sort} />
        <input type="hidden" name="dir" value={page.dir} />
        <button type="submit" className="btn-primary">
          Filter
        </button>
      </Form>
      <ServerTable
        caption="Workers"
        columns={columns}
        rows={page.rows}
        total={page.total}
        page={page.page}
        size={page.size}
        sort={page.sort}
        dir={page.dir}
        sortable={["employeeNumber", "name", "site", "department", "stage", "lastBaseline"]}
        emptyText="No workers match."
      />
    </div>
  );
}
