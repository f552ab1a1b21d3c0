import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { PrintButton } from "~/components/print-button";
import { ReadinessBoardView } from "~/components/readiness-chart";
import { HIDDEN_SYMBOL } from "~/compute/readiness-views";
import { boardViewer, readinessBoard } from "~/models/readiness.server";
import type { Route } from "./+types/readiness._index";

export const meta: Route.MetaFunction = () => [{ title: "Department readiness · Limberly" }];

// Managers get protected aggregates only: the model counts in SQL and runs disclosure control; this
// loader returns nothing else (what it returns is sent to the browser).
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "readiness.read");
  return { board: await readinessBoard(p.scope, boardViewer(p)) };
}

export default function ReadinessHome({ loaderData }: Route.ComponentProps) {
  const { board } = loaderData;
  const level = board.groupings.includes("department") ? "department" : "site";
  return (
    <div className="grid grid-cols-1 gap-6">
      <div className="grid gap-2">
        <h1 className="page-title" data-testid="role-home">
          Department readiness
        </h1>
        <p className="text-ink-soft">
          For {board.scopeLabel}. Counts only: no one's name or health data is shown, downloaded or sent to this page.
        </p>
        <p className="text-sm text-ink-soft">
          Groups smaller than {board.threshold} people are hidden and read as{" "}
          <span aria-hidden="true" className="font-semibold text-amber-caution">
            {HIDDEN_SYMBOL}
          </span>
          <span className="sr-only">the hidden symbol</span>; a few other numbers are hidden with them so that a small
          group cannot be worked out by subtraction. The figures are the same on every page, export and the API.
        </p>
        <div className="flex flex-wrap gap-2 print:hidden">
          <a className="btn-quiet" href="/readiness/export.xlsx" download>
            Download these tables (XLSX)
          </a>
          <PrintButton />
          {board.groupings.includes("site") && (
            <Link className="btn-quiet" to="/readiness/sites">
              Site view
            </Link>
          )}
        </div>
      </div>
      <ReadinessBoardView board={board} level={level} />
      <DeviceCautions compact />
    </div>
  );
}
