import { requireUser } from "~/auth/guard.server";
import type { ProtectedTable } from "~/compute/disclosure";
import { todayIn } from "~/dates";
import {
  boardViewer,
  type GroupingUsed,
  type MedianTable,
  type ReadinessBoard,
  readinessBoard,
} from "~/models/readiness.server";
import { viewerTimeZone } from "~/models/sites.server";
import { type SheetSpec, workbookBuffer, xlsxResponse } from "~/xlsx.server";
import type { Route } from "./+types/readiness.export";

// XLSX download of exactly the protected tables the manager's pages show. Every figure is a number
// cell so sums work; a hidden figure is an empty cell, and the row's last column says which figures
// of that row are hidden and why. One reason for every hidden count: saying which were hidden for
// being small would tell the reader those are 1 to threshold − 1.
const HIDDEN_COLUMN = "Hidden in this row";

function sheet(name: string, rowHeader: string, t: ProtectedTable | MedianTable, note: string): SheetSpec {
  const protectedTable = "rowTotals" in t ? t : null;
  const columns = [
    { header: rowHeader, key: "group", width: 34 },
    ...t.columns.map((c, j) => ({ header: c, key: `c${j}`, width: 16 })),
  ];
  if (protectedTable) columns.push({ header: "Total", key: "total", width: 12 });
  columns.push({ header: HIDDEN_COLUMN, key: "hidden", width: 40 });
  const row = (group: string, values: (number | null)[], total?: number | null): Record<string, unknown> => {
    const hiddenNames = values.flatMap((v, j) => (v === null ? [t.columns[j]] : []));
    if (total === null) hiddenNames.push("Total");
    return {
      group,
      ...Object.fromEntries(values.map((v, j) => [`c${j}`, v])),
      ...(protectedTable ? { total } : {}),
      hidden: hiddenNames.join(", "),
    };
  };
  const rows = t.rows.map((r, i) => row(r, t.cells[i], protectedTable?.rowTotals[i]));
  if (protectedTable) rows.push(row("Total", protectedTable.columnTotals, protectedTable.grandTotal));
  return { name, columns, rows, note };
}

const withUpdating = (note: string, g: GroupingUsed) => (g.updating ? `${note} ${g.updating}` : note);

function boardSheets(board: ReadinessBoard): SheetSpec[] {
  const t = board.threshold;
  const note = `An empty cell is hidden: a count of 1 to ${t - 1} people, or a number that would let one be worked out from the others. Zeros are shown.`;
  const sheets: SheetSpec[] = [];
  for (const level of ["department", "site"] as const) {
    const label = level === "department" ? "Department" : "Site";
    if (board.stage.status === "ok" && board.stage[level])
      sheets.push(sheet(`By stage (${level})`, label, board.stage[level]!, withUpdating(note, board.stage.grouping)));
    if (board.ready.status === "ok" && board.ready[level])
      sheets.push(
        sheet(
          `Ready per device (${level})`,
          label,
          board.ready[level]!,
          withUpdating(`${note} Totals count person-device pairs.`, board.ready.grouping),
        ),
      );
    if (board.medians.status === "ok" && board.medians[level]) {
      sheets.push(
        sheet(
          `Median hours (${level})`,
          label,
          board.medians[level]!,
          `An empty cell is hidden: fewer than ${t} people in the group have a forecast. Median of current forecasts of total training hours.`,
        ),
      );
    }
  }
  if (board.planned.status === "ok")
    sheets.push(
      sheet(
        "Planned ready by week",
        "Week",
        board.planned.table,
        `${note} Person-device pairs whose last planned session falls in that week.`,
      ),
    );
  if (sheets.length === 0)
    sheets.push({
      name: "Readiness",
      columns: [{ header: "Note", key: "note", width: 80 }],
      rows: [{ note: "Nothing to show for your departments yet." }],
    });
  return sheets;
}

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "readiness.read");
  const board = await readinessBoard(p.scope, boardViewer(p));
  const buffer = await workbookBuffer(boardSheets(board));
  return xlsxResponse(buffer, `limberly-readiness-${todayIn(await viewerTimeZone(p))}.xlsx`);
}
