import { requireApiAccess } from "~/auth/guard.server";
import type { ProtectedTable } from "~/compute/disclosure";
import { transposeProtected } from "~/compute/readiness-views";
import { boardViewer, type MedianTable, readinessBoard } from "~/models/readiness.server";
import { GROUPING_LABELS, readinessApiQuerySchema } from "~/schemas/readiness";
import type { Route } from "./+types/api.v1.readiness";

// GET /api/v1/readiness?groupBy=site|department|deviceType|stage — protected tables only, the same
// figures the manager's pages show. A hidden figure is null, and the parallel `reasons` entry gives its
// reason code (see REASON_CODES); a shown figure has reason null. No other query parameters: fixed
// groupings, no filters.
const REASON_CODES = {
  protected:
    "hidden by disclosure control: a count of 1 to threshold − 1 people, or a number that would let one be worked out from the others",
  "too-few-people": "fewer than threshold people in the group have a forecast",
} as const;
type ReasonCode = keyof typeof REASON_CODES;

const reasonOf = (code: ReasonCode) => (v: number | null) => (v === null ? code : null);

function plain(t: ProtectedTable) {
  const reason = reasonOf("protected");
  return {
    rows: t.rows,
    columns: t.columns,
    cells: t.cells,
    rowTotals: t.rowTotals,
    columnTotals: t.columnTotals,
    grandTotal: t.grandTotal,
    reasons: {
      cells: t.cells.map((r) => r.map(reason)),
      rowTotals: t.rowTotals.map(reason),
      columnTotals: t.columnTotals.map(reason),
      grandTotal: reason(t.grandTotal),
    },
  };
}
function medians(rows: string[], columns: string[], cells: (number | null)[][]) {
  const reason = reasonOf("too-few-people");
  return { rows, columns, cells, reasons: { cells: cells.map((r) => r.map(reason)) } };
}
function transposeMedians(t: MedianTable) {
  return medians(
    t.columns,
    t.rows,
    t.columns.map((_, j) => t.rows.map((_, i) => t.cells[i][j])),
  );
}

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireApiAccess(request, "readiness.read");
  const url = new URL(request.url);
  const parsed = readinessApiQuerySchema.safeParse(Object.fromEntries(url.searchParams.entries()));
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const field =
      issue.path.join(".") ||
      (issue.code === "unrecognized_keys" ? (issue as { keys?: string[] }).keys?.join(", ") : "") ||
      "query";
    return Response.json(
      {
        error: `${field}: ${issue.code === "unrecognized_keys" ? "not accepted; only groupBy is (fixed groupings, no filters)." : issue.message}`,
      },
      { status: 400 },
    );
  }
  const { groupBy } = parsed.data;
  const board = await readinessBoard(p.scope, boardViewer(p));
  if (!board.groupings.includes(groupBy)) {
    return Response.json(
      {
        error: `groupBy: your organisation does not publish readiness by ${GROUPING_LABELS[groupBy].toLowerCase()} to managers.`,
      },
      { status: 403 },
    );
  }
  const level = board.groupings.includes("department") ? "department" : "site";
  const tables: Record<string, unknown> = {};
  if (groupBy === "site" || groupBy === "department") {
    if (board.stage.status === "ok" && board.stage[groupBy]) tables.workersByStage = plain(board.stage[groupBy]!);
    if (board.ready.status === "ok" && board.ready[groupBy]) tables.readyByDeviceType = plain(board.ready[groupBy]!);
    if (board.medians.status === "ok" && board.medians[groupBy]) {
      const m = board.medians[groupBy]!;
      tables.medianForecastHours = medians(m.rows, m.columns, m.cells);
    }
  } else if (groupBy === "deviceType") {
    if (board.ready.status === "ok" && board.ready[level])
      tables.readyByDeviceType = plain(transposeProtected(board.ready[level]!));
    if (board.medians.status === "ok" && board.medians[level])
      tables.medianForecastHours = transposeMedians(board.medians[level]!);
  } else if (board.stage.status === "ok" && board.stage[level]) {
    tables.workersByStage = plain(transposeProtected(board.stage[level]!));
  }
  const notes: Record<string, string> = Object.fromEntries(
    (["stage", "ready", "planned", "medians"] as const)
      .filter((k) => board[k].status === "empty")
      .map((k) => [k, (board[k] as { reason: string }).reason]),
  );
  for (const k of ["stage", "ready"] as const) {
    const panel = board[k];
    if (panel.status === "ok" && panel.grouping.updating) notes[k] = panel.grouping.updating;
  }
  return Response.json(
    {
      groupBy,
      threshold: board.threshold,
      hidden: "null means hidden; each table's reasons give the code, reasonCodes what it means",
      reasonCodes: REASON_CODES,
      scope: board.scopeLabel,
      tables,
      notes,
    },
    { headers: { "Cache-Control": "no-store" } },
  );
}
