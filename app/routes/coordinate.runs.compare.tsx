import { data, Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { type CompareSide, RunCompare } from "~/components/run-compare";
import { recordAccess } from "~/models/access-log.server";
import { getRun, type RunDetail } from "~/models/allocation-runs.server";
import { nameMaps } from "~/models/fleet-admin.server";
import { percentileLabel } from "~/schemas/forecast";
import type { Route } from "./+types/coordinate.runs.compare";

export const meta: Route.MetaFunction = () => [{ title: "Compare allocation runs · Limberly" }];

function side(
  run: RunDetail,
  trainerNames: Map<number, string>,
  deviceNames: Map<number, string>,
  siteNames: Map<number, string>,
): CompareSide {
  const pr = run.parameters;
  const workers = new Map((run.snapshot?.calendar.workers ?? []).map((w) => [w.id, w]));
  const byDevice: Record<string, number> = {};
  const readyNames: Record<string, string> = {};
  for (const a of run.plan?.assignments ?? []) {
    byDevice[a.deviceTypeId] = (byDevice[a.deviceTypeId] ?? 0) + 1;
    const w = workers.get(a.workerId);
    readyNames[a.workerId] = w
      ? `${w.employeeNumber} · ${w.name} (${a.deviceTypeId}, week ${a.completionWeek + 1})`
      : a.workerId;
  }
  const parameters = [
    `Start ${pr.startDate}, ${pr.horizonWeeks} weeks`,
    `Planning figure: the ${percentileLabel(pr.planningQuantile)}, fairness share ${Math.round(pr.fairnessShare * 100)} %`,
    `Sites: ${pr.pool.siteIds.map((s) => siteNames.get(s) ?? s).join(", ")}${pr.pool.departmentIds.length ? ` (${pr.pool.departmentIds.length} departments)` : ""}`,
    ...(pr.pool.includeProficientElsewhere ? ["Pool includes workers proficient on another device type"] : []),
    ...pr.whatIf.addUnits.map(
      (u) =>
        `What-if: +${u.count} ${deviceNames.get(u.deviceTypeId) ?? "unit"} at ${siteNames.get(u.siteId) ?? u.siteId}`,
    ),
    ...pr.whatIf.removeTrainerIds.map((t) => `What-if: without ${trainerNames.get(t) ?? `trainer ${t}`}`),
  ];
  return {
    id: run.id,
    label: run.label ?? `${pr.horizonWeeks} weeks from ${pr.startDate}`,
    parameters,
    status: run.plan?.status ?? run.status,
    objective: run.plan?.objective ?? null,
    // after placement, and without a re-plan's keep bonus (the solver's objective carries it)
    value: run.summary?.value ?? run.plan?.objective ?? null,
    bound: run.plan?.bound ?? null,
    gap: run.plan?.gap ?? null,
    ready: run.summary?.ready ?? run.plan?.assignments.length ?? 0,
    pool: run.snapshot?.problem.workers.length ?? 0,
    byDevice,
    readyNames,
    binding: (run.plan?.bindingResources ?? []).map((b) => b.description),
  };
}

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "allocation.run");
  const url = new URL(request.url);
  const [a, b] = await Promise.all(["a", "b"].map((k) => getRun(p.scope, Number(url.searchParams.get(k)))));
  if (!a || !b) throw data({ error: "Choose two runs in your scope to compare (?a=…&b=…)." }, { status: 404 });
  const { trainers: trainerNames, devices: deviceNames, sites: siteNames } = await nameMaps();
  const ids = [
    ...new Set([...(a.plan?.assignments ?? []), ...(b.plan?.assignments ?? [])].map((x) => Number(x.workerId))),
  ];
  await recordAccess(p, request, ids, "plan");
  return { a: side(a, trainerNames, deviceNames, siteNames), b: side(b, trainerNames, deviceNames, siteNames) };
}

export default function Compare({ loaderData }: Route.ComponentProps) {
  const { a, b } = loaderData;
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link className="text-spruce-700 underline" to="/coordinate/runs">
            Allocation runs
          </Link>
        </p>
        <h1 className="page-title">
          Run #{a.id} and run #{b.id} side by side
        </h1>
        <p className="text-ink-soft">
          What changes when a unit is added, a trainer is away or the horizon changes. Differences are in bold.
        </p>
      </div>
      <RunCompare a={a} b={b} />
      <p className="flex flex-wrap gap-2">
        <Link className="btn-quiet" to={`/coordinate/runs/${a.id}`}>
          Open run #{a.id}
        </Link>
        <Link className="btn-quiet" to={`/coordinate/runs/${b.id}`}>
          Open run #{b.id}
        </Link>
      </p>
      <DeviceCautions compact />
    </div>
  );
}
