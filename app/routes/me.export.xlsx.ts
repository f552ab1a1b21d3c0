import { data } from "react-router";
import { everythingAbout, exportSheets } from "~/models/worker-export.server";
import { workbookBuffer, xlsxResponse } from "~/xlsx.server";
import type { Route } from "./+types/me.export.xlsx";
import { requireOwnWorker } from "./me.guard.server";

// Everything held about the signed-in worker, as a spreadsheet (formula-like cells neutralised).
export async function loader({ request }: Route.LoaderArgs) {
  const { workerId } = await requireOwnWorker(request, "self.read");
  const all = await everythingAbout(workerId);
  if (!all) throw data({ error: "Your worker record was not found." }, { status: 404 });
  return xlsxResponse(
    await workbookBuffer(exportSheets(all)),
    `limberly-my-data-${all.worker.employeeNumber}-${all.generatedAt.slice(0, 10)}.xlsx`,
  );
}
