import { requireApiAccess } from "~/auth/guard.server";
import { userErrorResponse } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import { workerForecastView } from "~/models/forecast.server";
import type { Route } from "./+types/api.v1.workers.$workerId.forecast";

// GET /api/v1/workers/:workerId/forecast — for assessor- or coordinator-scoped keys (forecast.read).
// Same payload and zod schema (workerForecastSchema) as the forecast page; coordinators get no scores.
export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireApiAccess(request, "forecast.read");
  const workerId = Number(params.workerId);
  if (!Number.isInteger(workerId) || workerId <= 0)
    return Response.json({ error: "workerId must be a positive whole number." }, { status: 400 });
  try {
    const view = await workerForecastView(p, workerId);
    await recordAccess(p, request, workerId, "forecast");
    return Response.json(view, { headers: { "Cache-Control": "no-store" } });
  } catch (e) {
    return userErrorResponse(e);
  }
}
