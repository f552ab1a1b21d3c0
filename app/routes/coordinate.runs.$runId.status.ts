import { requireUser } from "~/auth/guard.server";
import { getRunStatus } from "~/models/allocation-runs.server";
import type { Route } from "./+types/coordinate.runs.$runId.status";

// GET /coordinate/runs/:runId/status — progress of a run, polled by the run page (no worker data in it).
export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "allocation.run");
  const run = await getRunStatus(p.scope, Number(params.runId));
  if (!run) return Response.json({ error: "No such run in your scope." }, { status: 404 });
  return Response.json(
    {
      id: run.id,
      status: run.status,
      phase: run.phase,
      fraction: run.fraction,
      error: run.error,
      attempts: run.attempts,
    },
    { headers: { "Cache-Control": "no-store" } },
  );
}
