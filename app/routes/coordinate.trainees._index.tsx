import type { ColumnDef } from "@tanstack/react-table";
import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { StageBadge } from "~/components/badges";
import { ServerTable } from "~/components/server-table";
import { answerUserErrors } from "~/forms.server";
import { type TraineeRow, traineeTable } from "~/models/trainers-admin.server";
import { readTableQuery } from "~/schemas/table-query";
import type { Route } from "./+types/coordinate.trainees._index";

export const meta: Route.MetaFunction = () => [{ title: "Trainees · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  return answerUserErrors(async () => {
    const p = await requireUser(request, "allocation.run");
    const q = readTableQuery(new URL(request.url));
    return { page: await traineeTable(p.scope, q), q: q.q ?? "" };
  });
}

const columns: ColumnDef<TraineeRow, unknown>[] = [
  {
    id: "worker",
    header: "Worker",
    cell: ({ row }) => (
      <Link className="font-medium text-spruce-700 underline" to={`/coordinate/trainees/${row.original.workerId}`}>
        {row.original.employeeNumber} · {row.original.name}
      </Link>
    ),
  },
  {
    id: "department",
    header: "Department (fairness group)",
    cell: ({ row }) => `${row.original.site} · ${row.original.department}`,
  },
  { id: "stage", header: "Stage", cell: ({ row }) => <StageBadge stage={row.original.stage} /> },
  {
    id: "priority",
    header: "Priority",
    cell: ({ row }) => (
      <span title={row.original.priorityReason ?? undefined}>
        {row.original.priority}
        {row.original.priorityReason ? " *" : ""}
      </span>
    ),
  },
  {
    id: "max",
    header: "Max h/week",
    cell: ({ row }) => (row.original.maxHoursPerWeek == null ? "device default" : `${row.original.maxHoursPerWeek} h`),
  },
  { id: "leave", header: "Leave periods", cell: ({ row }) => row.original.leaveCount || "—" },
];

export default function Trainees({ loaderData }: Route.ComponentProps) {
  const { page, q } = loaderData;
  return (
    <div className="grid gap-4">
      <div>
        <h1 className="page-title">Trainees</h1>
        <p className="text-ink-soft">
          Training fields the allocator uses: priority (with a reason when not the default), max hours per week (else
          the device type's default) and leave. The department is the fairness group.
        </p>
      </div>
      <ServerTable
        caption="Trainees"
        columns={columns}
        rows={page.rows}
        total={page.total}
        page={page.page}
        size={page.size}
        sort={page.sort}
        dir={page.dir}
        sortable={["worker", "department", "priority", "stage"]}
        searchLabel="Search by name, employee number or department"
        q={q}
      />
    </div>
  );
}
