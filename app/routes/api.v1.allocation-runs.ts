import { requireApiAccess } from "~/auth/guard.server";
import { apiAction } from "~/forms.server";
import { listRuns, startRun } from "~/models/allocation-runs.server";
import { runParametersSchema } from "~/schemas/allocation";
import type { Route } from "./+types/api.v1.allocation-runs";

// POST /api/v1/allocation-runs — start a run (coordinator keys: allocation.run). Body: JSON with the same
// parameters schema as the form (runParametersSchema): startDate (a Monday), horizonWeeks, pool,
// fairnessShare (0–1), whatIf. Answers 202 with the run id and where to poll. The run plans at the organisation's
// planning quantile (set with the forecast models); a body naming planningQuantile is refused (400, that field).
// GET lists recent runs (status only).
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireApiAccess(request, "allocation.run");
  const runs = await listRuns(p.scope);
  return Response.json(
    {
      runs: runs.map((r) => ({
        id: r.id,
        label: r.label,
        status: r.status,
        fraction: r.fraction,
        parameters: r.parameters,
        createdAt: r.createdAt,
        publishedAt: r.publishedAt,
      })),
    },
    { headers: { "Cache-Control": "no-store" } },
  );
}

export async function action({ request }: Route.ActionArgs) {
  if (request.method !== "POST") return Response.json({ error: "Use POST to start a run." }, { status: 405 });
  const p = await requireApiAccess(request, "allocation.run");
  return apiAction(request, runParametersSchema, "Invalid run parameters.", async (parameters) => {
    const id = await startRun(p, parameters);
    return Response.json(
      { id, status: "queued", href: `/api/v1/allocation-runs/${id}` },
      { status: 202, headers: { Location: `/api/v1/allocation-runs/${id}` } },
    );
  });
}
