import { requireUser } from "~/auth/guard.server";
import { todayIn } from "~/dates";
import { ROSTER_EXPORT_COLUMNS, rosterExportPages } from "~/models/roster.server";
import { viewerTimeZone } from "~/models/sites.server";
import { streamedXlsxResponse } from "~/xlsx.server";
import type { Route } from "./+types/assess.roster.export";

// Roster export (no health data): the import's own columns, formula-like text as Text cells, streamed page by
// page so that a roster of any size keeps the server's memory flat.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "roster.import");
  return streamedXlsxResponse(
    { name: "Roster", columns: ROSTER_EXPORT_COLUMNS, pages: rosterExportPages(p.scope) },
    `limberly-roster-${todayIn(await viewerTimeZone(p))}.xlsx`,
  );
}
