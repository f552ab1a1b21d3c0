import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { PrintButton } from "~/components/print-button";
import { ReadinessBoardView } from "~/components/readiness-chart";
import { boardViewer, readinessBoard } from "~/models/readiness.server";
import type { Route } from "./+types/readiness.sites";

export const meta: Route.MetaFunction = () => [{ title: "Site readiness · Limberly" }];

// Site view: the site rows of the same organisation-wide protected publication as the department
// view, so the two together reveal nothing more. A manager of whole sites sees each site's figures; a
// manager of some departments sees their departments added up per site (only where every part is shown).
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "readiness.read");
  const board = await readinessBoard(p.scope, boardViewer(p));
  const allowed = board.groupings.includes("site");
  return { allowed, board: allowed ? board : null, scopeLabel: board.scopeLabel };
}

export default function SiteReadiness({ loaderData }: Route.ComponentProps) {
  const { allowed, board, scopeLabel } = loaderData;
  return (
    <div className="grid grid-cols-1 gap-6">
      <div className="grid gap-2">
        <h1 className="page-title">Site readiness</h1>
        {allowed && board ? (
          <>
            <p className="text-ink-soft">
              {board.wholeSites.length > 0
                ? `For ${board.wholeSites.join(", ")}.`
                : `For ${scopeLabel}, added up per site: you manage departments, not whole sites, so a site row counts your departments only.`}{" "}
              Sites and departments are protected together, so a department cannot be worked out from its site's
              numbers.
            </p>
            <div className="flex flex-wrap gap-2 print:hidden">
              <a className="btn-quiet" href="/readiness/export.xlsx" download>
                Download these tables (XLSX)
              </a>
              <PrintButton />
              <Link className="btn-quiet" to="/readiness">
                Department view
              </Link>
            </div>
          </>
        ) : (
          <p className="rounded-md bg-spruce-50 p-3 text-spruce-800" role="note">
            Your organisation does not show readiness per site to managers.{" "}
            <Link to="/readiness" className="underline">
              Go to department readiness
            </Link>
          </p>
        )}
      </div>
      {allowed && board && <ReadinessBoardView board={board} level="site" />}
    </div>
  );
}
