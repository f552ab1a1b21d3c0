import { requireUser } from "~/auth/guard.server";
import { todayIn } from "~/dates";
import { ROSTER_EXPORT_COLUMNS, rosterExportRows } from "~/models/roster.server";
import { viewerTimeZone } from "~/models/sites.server";
import { workbookBuffer, xlsxResponse } from "~/xlsx.server";
import type { Route } from "./+types/assess.roster.export";

// Roster export (no health data): the import's own columns, formula-like cells neutralised by workbookBuffer.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "roster.import");
  const rows = await rosterExportRows(p.scope);
  const buf = await workbookBuffer([{ name: "Roster", columns: ROSTER_EXPORT_COLUMNS, rows }]);
  return xlsxResponse(buf, `limberly-roster-${todayIn(await viewerTimeZone(p))}.xlsx`);
}
