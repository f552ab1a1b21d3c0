import { data } from "react-router";
import { everythingAbout } from "~/models/worker-export.server";
import type { Route } from "./+types/me.export.json";
import { requireOwnWorker } from "./me.guard.server";

// Everything held about the signed-in worker, as JSON. The worker id comes from the session only.
export async function loader({ request }: Route.LoaderArgs) {
  const { workerId } = await requireOwnWorker(request, "self.read");
  const all = await everythingAbout(workerId);
  if (!all) throw data({ error: "Your worker record was not found." }, { status: 404 });
  return new Response(JSON.stringify(all, null, 2), {
    headers: {
      "Content-Type": "application/json; charset=utf-8",
      "Content-Disposition": `attachment; filename="limberly-my-data-${all.worker.employeeNumber}-${all.generatedAt.slice(0, 10)}.json"`,
      "Cache-Control": "no-store",
    },
  });
}
