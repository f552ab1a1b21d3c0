import { requireUser } from "~/auth/guard.server";
import { todayIn } from "~/dates";
import { recordAccess } from "~/models/access-log.server";
import { publishedSchedule, SCHEDULE_NOTE } from "~/models/schedule.server";
import { viewerTimeZone } from "~/models/sites.server";
import { workbookBuffer, xlsxResponse } from "~/xlsx.server";
import type { Route } from "./+types/coordinate.schedule-export";

// GET /coordinate/schedule.xlsx — the published training schedule of workers in the coordinator's scope, in
// each site's wall-clock time (the zone is a column).
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "sessions.plan");
  const zone = await viewerTimeZone(p);
  const rows = await publishedSchedule(p.scope);
  await recordAccess(p, request, [...new Set(rows.map((r) => r.workerId))], "sessions", "export");
  const buffer = await workbookBuffer([
    {
      name: "Schedule",
      columns: [
        { header: "Date", key: "date", width: 12 },
        { header: "Start", key: "start", width: 8 },
        { header: "End", key: "end", width: 8 },
        { header: "Employee number", key: "employeeNumber", width: 16 },
        { header: "Worker", key: "worker", width: 24 },
        { header: "Site", key: "site", width: 14 },
        { header: "Time zone", key: "timeZone", width: 16 },
        { header: "Department", key: "department", width: 18 },
        { header: "Device type", key: "deviceType", width: 32 },
        { header: "Unit", key: "unit", width: 22 },
        { header: "Trainer", key: "trainer", width: 20 },
        { header: "Run", key: "runId", width: 6 },
      ],
      rows: rows as unknown as Record<string, unknown>[],
      note: SCHEDULE_NOTE,
    },
  ]);
  return xlsxResponse(buffer, `training-schedule-${todayIn(zone)}.xlsx`);
}
