import type { ColumnDef } from "@tanstack/react-table";
import { Form, Link } from "react-router";
import { z } from "zod";
import { requireUser } from "~/auth/guard.server";
import { ServerTable } from "~/components/server-table";
import { answerUserErrors } from "~/forms.server";
import { type ForecastListRow, listForecastTable, planningQuantile } from "~/models/forecast.server";
import { listDeviceTypes } from "~/models/proficiency.server";
import { idFilter, readTableQuery } from "~/schemas/table-query";
import type { Route } from "./+types/forecast._index";

export const meta: Route.MetaFunction = () => [{ title: "Forecasts · Limberly" }];

// Forecast hours of workers in scope (assessors and coordinators): hours and intervals only, no scores.
export async function loader({ request }: Route.LoaderArgs) {
  return answerUserErrors(async () => {
    const p = await requireUser(request, "forecast.read");
    const q = readTableQuery(new URL(request.url), {
      device: idFilter("Device"),
      flagged: z.enum(["1"], { message: "Flagged: 1 or nothing." }),
    });
    const deviceTypeId = Number(q.filters.device) || undefined;
    const [page, devices, quantile] = await Promise.all([
      listForecastTable(p.scope, q, { deviceTypeId, flagged: q.filters.flagged === "1" }),
      listDeviceTypes(),
      planningQuantile(),
    ]);
    // A list is not a read of each person on it: opening one worker's forecast is the logged read.
    return { page, devices, quantile, q: q.q ?? "", device: deviceTypeId ?? null, flagged: q.filters.flagged === "1" };
  });
}

const h = (v: number) => `${v.toFixed(1)} h`;
const columns: ColumnDef<ForecastListRow, unknown>[] = [
  {
    id: "worker",
    header: "Worker",
    cell: ({ row }) => (
      <Link className="font-medium text-spruce-700 underline" to={`/forecast/${row.original.workerId}`}>
        {row.original.employeeNumber} · {row.original.name}
      </Link>
    ),
  },
  { id: "device", header: "Device type", cell: ({ row }) => row.original.deviceType },
  { id: "median", header: "Median", cell: ({ row }) => h(row.original.medianHours) },
  {
    id: "interval",
    header: "80 % interval",
    cell: ({ row }) => `${row.original.lowerHours.toFixed(1)}–${row.original.upperHours.toFixed(1)} h`,
  },
  { id: "planning", header: "Planning figure", cell: ({ row }) => <strong>{h(row.original.planningHours)}</strong> },
  {
    id: "remaining",
    header: "Progress",
    cell: ({ row }) => {
      const r = row.original;
      if (r.progressStatus === "proficient") return "Proficient";
      if (r.progressStatus === "review")
        return (
          <Link className="text-alert underline" to={`/progress/${r.workerId}/${r.deviceTypeId}`}>
            Review: plateau
          </Link>
        );
      if (r.remainingHours != null)
        return (
          <Link className="text-spruce-700 underline" to={`/progress/${r.workerId}/${r.deviceTypeId}`}>
            {h(r.remainingHours)} to go
          </Link>
        );
      return "—";
    },
  },
  {
    id: "flag",
    header: "Flags",
    cell: ({ row }) =>
      row.original.flagged ? (
        <span className="rounded bg-alert-wash px-2 py-0.5 text-xs font-semibold text-alert">review</span>
      ) : (
        ""
      ),
  },
];

export default function ForecastIndex({ loaderData }: Route.ComponentProps) {
  const { page, devices, quantile, q, device, flagged } = loaderData;
  return (
    <div className="grid gap-4">
      <div>
        <h1 className="page-title">Forecasts</h1>
        <p className="text-ink-soft">
          Hours to proficiency for workers who consented to planning, from each device type's approved model. The
          planning figure is the {Math.round(quantile * 100)}th percentile. Forecasts are decision support: a person
          makes every plan.
        </p>
      </div>
      <Form method="get" className="flex flex-wrap items-end gap-3">
        <div>
          <label htmlFor="device" className="field-label">
            Device type
          </label>
          <select id="device" name="device" defaultValue={device ?? ""} className="field-input">
            <option value="">All device types</option>
            {devices.map((d) => (
              <option key={d.id} value={d.id}>
                {d.name}
              </option>
            ))}
          </select>
        </div>
        <label className="flex min-h-11 items-center gap-2">
          <input type="checkbox" name="flagged" value="1" defaultChecked={flagged} className="h-5 w-5" /> Only flagged
          for review
        </label>
        <input type="hidden" name="q" value={q} />
        <button type="submit" className="btn-quiet">
          Apply
        </button>
      </Form>
      <ServerTable
        caption="Worker forecasts"
        columns={columns}
        rows={page.rows}
        total={page.total}
        page={page.page}
        size={page.size}
        sort={page.sort}
        dir={page.dir}
        sortable={["worker", "device", "median", "planning", "remaining"]}
        searchLabel="Find a worker (number or name)"
        q={q}
        emptyText="No forecasts yet: a device type needs an approved model, and workers need planning consent and a baseline."
      />
    </div>
  );
}
