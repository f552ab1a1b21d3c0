import { requireUser } from "~/auth/guard.server";
import { formatInstant, todayIn } from "~/dates";
import { exportAccessLog } from "~/models/access-log.server";
import { viewerTimeZone } from "~/models/sites.server";
import { accessLogFilterSchema } from "~/schemas/admin";
import { workbookBuffer, xlsxResponse } from "~/xlsx.server";
import type { Route } from "./+types/admin.access-log.export";

// XLSX download of the access log with the same filters as the page.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "admin.accesslog");
  const zone = await viewerTimeZone(p);
  const url = new URL(request.url);
  const parsed = accessLogFilterSchema.safeParse(Object.fromEntries(url.searchParams.entries()));
  const rows = await exportAccessLog(parsed.success ? parsed.data : {});
  const buffer = await workbookBuffer([
    {
      name: "Access log",
      columns: [
        { header: "When (UTC)", key: "at", width: 24 },
        { header: `When (${zone})`, key: "local", width: 24 },
        { header: "Who", key: "actor", width: 40 },
        { header: "Role", key: "actorRole" },
        { header: "Employee number", key: "employeeNumber" },
        { header: "What", key: "resource" },
        { header: "Action", key: "action" },
        { header: "Route", key: "route", width: 40 },
      ],
      rows: rows.map((r) => ({ ...r, local: formatInstant(r.at, zone) })) as unknown as Record<string, unknown>[],
    },
  ]);
  return xlsxResponse(buffer, `limberly-access-log-${todayIn(zone)}.xlsx`);
}
