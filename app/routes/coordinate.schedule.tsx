import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { recordAccess } from "~/models/access-log.server";
import { planState } from "~/models/publish.server";
import { publishedSchedule, SCHEDULE_NOTE } from "~/models/schedule.server";
import type { Route } from "./+types/coordinate.schedule";

export const meta: Route.MetaFunction = () => [{ title: "Published schedule · Limberly" }];

const SHOWN = 500;

// The upcoming published schedule of the workers in the coordinator's scope (the same reader as the export).
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "sessions.plan");
  const rows = await publishedSchedule(p.scope);
  const shown = rows.slice(0, SHOWN);
  if (shown.length) await recordAccess(p, request, [...new Set(shown.map((r) => r.workerId))], "sessions");
  return { rows: shown, total: rows.length, plan: await planState(), note: SCHEDULE_NOTE };
}

export default function Schedule({ loaderData }: Route.ComponentProps) {
  const { rows, total, plan, note } = loaderData;
  return (
    <div className="grid gap-4">
      <h1 className="page-title">Published schedule</h1>
      <p>
        {plan.runId ? (
          <>
            Plan version {plan.version} from{" "}
            <Link className="text-spruce-700 underline" to={`/coordinate/runs/${plan.runId}`}>
              run #{plan.runId}
            </Link>
            {plan.by ? `, published by ${plan.by}` : ""}.{" "}
          </>
        ) : null}
        {total} upcoming sessions{total > rows.length ? `; the first ${rows.length} are shown here` : ""}.{" "}
        <a className="text-spruce-700 underline" href="/coordinate/schedule.xlsx">
          Download all (XLSX)
        </a>
      </p>
      {rows.length === 0 ? (
        <p className="text-ink-soft">No upcoming sessions in the published plan.</p>
      ) : (
        <section className="card overflow-x-auto p-0" tabIndex={0} aria-label="Upcoming sessions (scrolls sideways)">
          <table className="table-base" data-testid="schedule-table">
            <caption className="sr-only">Upcoming sessions: date, time, worker, device, unit, trainer</caption>
            <thead>
              <tr>
                <th scope="col">Date</th>
                <th scope="col">Time</th>
                <th scope="col">Worker</th>
                <th scope="col">Site</th>
                <th scope="col">Device type</th>
                <th scope="col">Unit</th>
                <th scope="col">Trainer</th>
              </tr>
            </thead>
            <tbody>
              {rows.map((r) => (
                <tr key={r.id} data-session-id={r.id}>
                  <td className="whitespace-nowrap">{r.date}</td>
                  <td className="whitespace-nowrap">
                    {r.start}–{r.end}
                  </td>
                  <td className="whitespace-nowrap">
                    <Link className="underline" to={`/coordinate/trainees/${r.workerId}`}>
                      {r.employeeNumber} · {r.worker}
                    </Link>
                  </td>
                  <td>{r.site}</td>
                  <td>{r.deviceType}</td>
                  <td>{r.unit ?? "—"}</td>
                  <td>{r.trainer ?? "—"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      )}
      <p className="text-sm text-ink-soft">{note} Times are each site's local time.</p>
      <DeviceCautions compact />
    </div>
  );
}
