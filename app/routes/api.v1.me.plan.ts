import { requireApiAccess } from "~/auth/guard.server";
import { myForecasts, mySessions, ownWorker } from "~/models/self-service.server";
import type { Route } from "./+types/api.v1.me.plan";

// The signed-in worker's own plan: upcoming sessions and forecasts. No worker id is accepted: API keys have
// no worker behind them and are refused; query parameters are ignored.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireApiAccess(request, "self.read");
  if (p.kind !== "user" || !p.user.workerId)
    return Response.json({ error: "Only a signed-in worker has a plan of their own." }, { status: 403 });
  const me = await ownWorker(p.user.workerId);
  if (!me) return Response.json({ error: "Your worker record was not found." }, { status: 404 });
  return Response.json(
    {
      worker: {
        employeeNumber: me.employeeNumber,
        name: me.name,
        stage: me.stage,
        site: me.site,
        department: me.department,
      },
      sessions: await mySessions(me.id),
      forecasts: await myForecasts(me.id),
    },
    { headers: { "Cache-Control": "no-store" } },
  );
}
