import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ReadinessBoardView } from "~/components/readiness-chart";
import { boardViewer, readinessBoard } from "~/models/readiness.server";
import type { Route } from "./+types/readiness.sites";

export const meta: Route.MetaFunction = () => [{ title: "Site readiness · Limberly" }];

// Site view for managers responsible for a whole site: the site rows of the same organisation-wide
// protected publication as the department view, so the two together reveal nothing more.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "readiness.read");
  const board = await readinessBoard(p.scope, boardViewer(p));
  const allowed = board.wholeSites.length > 0 && board.groupings.includes("site");
  return {
    allowed,
    board: allowed ? board : null,
    scopeLabel: board.scopeLabel,
    siteGrouping: board.groupings.includes("site"),
  };
}

export default function SiteReadiness({ loaderData }: Route.ComponentProps) {
  const { allowed, board, scopeLabel, siteGrouping } = loaderData;
  return (
    <div className="grid grid-cols-1 gap-6">
      <div className="grid gap-2">
        <h1 className="page-title">Site readiness</h1>
        {allowed && board ? (
          <>
            <p className="text-ink-soft">
              For {board.wholeSites.join(", ")}. Sites and departments are protected together, so a department cannot be
              worked out from its site's numbers.
            </p>
            <div className="flex flex-wrap gap-2">
              <a className="btn-quiet" href="/readiness/export.xlsx" download>
                Download these tables (XLSX)
              </a>
              <Link className="btn-quiet" to="/readiness">
                Department view
              </Link>
            </div>
          </>
        ) : (
          <p className="rounded-md bg-spruce-50 p-3 text-spruce-800" role="note">
            {siteGrouping
              ? `The site view is for managers responsible for a whole site. You manage ${scopeLabel}; your figures are on the department readiness page.`
              : "Your organisation does not show readiness per site to managers."}{" "}
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
