import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { WorkQueue } from "~/components/work-queue";
import { listRuns } from "~/models/allocation-runs.server";
import { fleetSummary, trainersSummary } from "~/models/fleet.server";
import { planState } from "~/models/publish.server";
import { coordinatorQueue } from "~/models/work-queues.server";
import type { Route } from "./+types/coordinate._index";

export const meta: Route.MetaFunction = () => [{ title: "Coordination home · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "fleet.manage");
  const [fleet, trainers, plan, runs, queue] = await Promise.all([
    fleetSummary(p.scope),
    trainersSummary(p.scope),
    planState(),
    listRuns(p.scope, 5),
    coordinatorQueue(p),
  ]);
  return {
    queue,
    fleet,
    trainers,
    plan,
    runs: runs.map((r) => ({
      id: r.id,
      label: r.label,
      status: r.status,
      startDate: r.parameters.startDate,
      weeks: r.parameters.horizonWeeks,
    })),
  };
}

export default function CoordinateHome({ loaderData }: Route.ComponentProps) {
  const { fleet, trainers, plan, runs, queue } = loaderData;
  return (
    <div className="grid gap-6">
      <h1 className="page-title" data-testid="role-home">
        Coordination home
      </h1>
      <WorkQueue items={queue} />
      <section aria-labelledby="plan" className="card grid gap-2">
        <h2 id="plan" className="text-lg font-semibold">
          Training plan
        </h2>
        <p>
          {plan.runId ? (
            <>
              Published plan version {plan.version} from{" "}
              <Link className="text-spruce-700 underline" to={`/coordinate/runs/${plan.runId}`}>
                run #{plan.runId}
              </Link>
              {plan.by ? `, by ${plan.by}` : ""}
              {plan.at ? ` on ${plan.at.slice(0, 10)}` : ""}.{" "}
              <a className="text-spruce-700 underline" href="/coordinate/schedule.xlsx">
                Download the schedule (XLSX)
              </a>
            </>
          ) : (
            "No plan published yet."
          )}
        </p>
        {runs.length > 0 && (
          <ul className="list-disc pl-5 text-sm">
            {runs.map((r) => (
              <li key={r.id}>
                <Link className="underline" to={`/coordinate/runs/${r.id}`}>
                  Run #{r.id}
                  {r.label ? ` · ${r.label}` : ""}
                </Link>
                : {r.status}, {r.weeks} weeks from {r.startDate}
              </li>
            ))}
          </ul>
        )}
        <p className="flex flex-wrap gap-2">
          <Link className="btn-primary" to="/coordinate/runs">
            Start an allocation run
          </Link>
          <Link className="btn-quiet" to="/coordinate/fleet">
            Fleet
          </Link>
          <Link className="btn-quiet" to="/coordinate/trainers">
            Trainers
          </Link>
          <Link className="btn-quiet" to="/coordinate/trainees">
            Trainees
          </Link>
        </p>
      </section>
      <section aria-labelledby="fleet" className="grid gap-2">
        <h2 id="fleet" className="text-lg font-semibold">
          Device fleet at your sites
        </h2>
        <section className="card overflow-x-auto p-0" tabIndex={0} aria-label="Device types">
          <table className="table-base">
            <caption className="sr-only">Device types</caption>
            <thead>
              <tr>
                <th scope="col">Device type</th>
                <th scope="col" className="text-right">
                  Units in service
                </th>
                <th scope="col" className="text-right">
                  In maintenance
                </th>
                <th scope="col" className="text-right">
                  Bookable h / week
                </th>
                <th scope="col" className="text-right">
                  Wear-time limit
                </th>
              </tr>
            </thead>
            <tbody>
              {fleet.map((d) => (
                <tr key={d.id}>
                  <th scope="row">{d.name}</th>
                  <td className="text-right tabular-nums">{d.inService}</td>
                  <td className="text-right tabular-nums">{d.inMaintenance}</td>
                  <td className="text-right tabular-nums">{d.bookableHours}</td>
                  <td className="text-right tabular-nums">{d.wearTimeLimitMinutes} min per session</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      </section>
      <section aria-labelledby="trainers" className="grid gap-2">
        <h2 id="trainers" className="text-lg font-semibold">
          Trainers
        </h2>
        <ul className="grid gap-2 md:grid-cols-2">
          {trainers.map((t) => (
            <li key={t.id} className="card">
              <p className="font-semibold">
                {t.name} <span className="text-sm font-normal text-ink-soft">· {t.site}</span>
              </p>
              <p className="text-sm text-ink-soft">
                {t.hoursPerWeek} h/week · up to {t.traineesPerSession} trainee{t.traineesPerSession > 1 ? "s" : ""} per
                session
              </p>
              <p className="text-sm">Certified: {t.certifications.join(", ") || "none"}</p>
            </li>
          ))}
        </ul>
      </section>
      <DeviceCautions compact />
    </div>
  );
}
