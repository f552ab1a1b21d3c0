import { requireApiAccess } from "~/auth/guard.server";
import { recordAccess } from "~/models/access-log.server";
import { getRun, planSummary } from "~/models/allocation-runs.server";
import type { Route } from "./+types/api.v1.allocation-runs.$runId";

// GET /api/v1/allocation-runs/:runId — status, progress and (when done) the result: the solver's plan with
// worker ids mapped to employee numbers and names (coordinators see consented workers' planning numbers).
export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireApiAccess(request, "allocation.run");
  const id = Number(params.runId);
  if (!Number.isInteger(id) || id <= 0)
    return Response.json({ error: "runId must be a positive whole number." }, { status: 400 });
  const run = await getRun(p.scope, id);
  if (!run) return Response.json({ error: "No such run in this key's scope." }, { status: 404 });
  const workers = new Map((run.snapshot?.calendar.workers ?? []).map((w) => [w.id, w]));
  const plan = run.plan;
  const label = (wid: string) => ({
    workerId: workers.get(wid)?.workerId ?? Number(wid),
    employeeNumber: workers.get(wid)?.employeeNumber ?? null,
    name: workers.get(wid)?.name ?? null,
  });
  if (plan)
    await recordAccess(
      p,
      request,
      plan.assignments.map((a) => Number(a.workerId)),
      "plan",
    );
  return Response.json(
    {
      id: run.id,
      label: run.label,
      status: run.status,
      phase: run.phase,
      fraction: run.fraction,
      error: run.error,
      attempts: run.attempts,
      parameters: run.parameters,
      createdAt: run.createdAt,
      finishedAt: run.finishedAt,
      publishedAt: run.publishedAt,
      publishedPlanVersion: run.publishedPlanVersion,
      result: plan
        ? {
            ...planSummary(plan),
            assignments: plan.assignments.map((a) => ({
              ...label(a.workerId),
              deviceType: a.deviceTypeId,
              completionWeek: a.completionWeek,
              sessions: a.sessions,
            })),
            unassigned: plan.unassigned.map((u) => ({ ...label(u.workerId), reason: u.reason })),
            bindingResources: plan.bindingResources ?? [],
            usage: plan.usage ?? [],
          }
        : null,
    },
    { headers: { "Cache-Control": "no-store" } },
  );
}
