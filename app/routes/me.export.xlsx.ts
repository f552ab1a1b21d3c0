import { data } from "react-router";
import type { Route } from "./+types/me.export.xlsx";
import { requireUser } from "~/auth/guard.server";
import { everythingAbout, exportSheets } from "~/models/worker-export.server";
import { workbookBuffer, xlsxResponse } from "~/xlsx.server";

// Everything held about the signed-in worker, as a spreadsheet (formula-like cells neutralised).
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "self.read");
  if (!p.user.workerId) throw data({ error: "Your account is not linked to a worker record." }, { status: 404 });
  const all = await everythingAbout(p.user.workerId);
  if (!all) throw data({ error: "Your worker record was not found." }, { status: 404 });
  return xlsxResponse(await workbookBuffer(exportSheets(all)), `limberly-my-data-${all.worker.employeeNumber}-${all.generatedAt.slice(0, 10)}.xlsx`);
}
