import { data } from "react-router";
import type { Route } from "./+types/me.calendar.ics";
import { requireUser } from "~/auth/guard.server";
import { myCalendar } from "~/models/worker-export.server";

// The signed-in worker's training sessions as an iCalendar file.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "self.read");
  if (!p.user.workerId) throw data({ error: "Your account is not linked to a worker record." }, { status: 404 });
  return new Response(await myCalendar(p.user.workerId), {
    headers: { "Content-Type": "text/calendar; charset=utf-8", "Content-Disposition": 'attachment; filename="my-device-training.ics"', "Cache-Control": "no-store" },
  });
}
