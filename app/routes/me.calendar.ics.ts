import { myCalendar } from "~/models/worker-export.server";
import type { Route } from "./+types/me.calendar.ics";
import { requireOwnWorker } from "./me.guard.server";

// The signed-in worker's training sessions as an iCalendar file.
export async function loader({ request }: Route.LoaderArgs) {
  const { workerId } = await requireOwnWorker(request, "self.read");
  return new Response(await myCalendar(workerId), {
    headers: {
      "Content-Type": "text/calendar; charset=utf-8",
      "Content-Disposition": 'attachment; filename="my-device-training.ics"',
      "Cache-Control": "no-store",
    },
  });
}
