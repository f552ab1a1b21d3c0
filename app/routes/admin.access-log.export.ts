import { requireUser } from "~/auth/guard.server";
import { exportAccessLog } from "~/models/access-log.server";
import { accessLogFilterSchema } from "~/schemas/admin";
import { workbookBuffer, xlsxResponse } from "~/xlsx.server";
import type { Route } from "./+types/admin.access-log.export";

// XLSX download of the access log with the same filters as the page.
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "admin.accesslog");
  const url = new URL(request.url);
  const parsed = accessLogFilterSchema.safeParse(Object.fromEntries(url.searchParams.entries()));
  const rows = await exportAccessLog(parsed.success ? parsed.data : {});
  const buffer = await workbookBuffer([
    {
      name: "Access log",
      columns: [
        { header: "When (UTC)", key: "at", width: 24 },
        { header: "Who", key: "actor", width: 40 },
        { header: "Role", key: "actorRole" },
        { header: "Employee number", key: "employeeNumber" },
        { header: "What", key: "resource" },
        { header: "Action", key: "action" },
        { header: "Route", key: "route", width: 40 },
      ],
      rows: rows as unknown as Record<string, unknown>[],
    },
  ]);
  return xlsxResponse(buffer, `limberly-access-log-${new Date().toISOString().slice(0, 10)}.xlsx`);
}
