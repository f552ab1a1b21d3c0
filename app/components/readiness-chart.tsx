import { CartesianGrid, Legend, Line, LineChart, Tooltip, XAxis, YAxis } from "recharts";
import type { ReadinessBoard } from "~/models/readiness.server";
import { ChartFrame } from "./chart-frame";
import { GroupingNote } from "./grouping-note";
import { ProtectedTableView } from "./protected-table";

// Cumulative "planned ready" by week, drawn only from running totals that follow exactly from the
// protected weekly table (see cumulativeFromProtected). A week whose running total would need a
// hidden number is a gap in the line, never an estimate. The weekly table beside it has the numbers.
const COLOURS = ["#1f6b5c", "#8a5a00", "#3d5a99", "#7a3e6b", "#4a5565", "#2f7d32", "#a1261b"];

export interface CumulativeSeries {
  label: string;
  values: (number | null)[];
}

export function ReadinessChart({
  weeks,
  series,
  total,
  title,
}: {
  weeks: string[];
  series: CumulativeSeries[];
  total: (number | null)[];
  title: string;
}) {
  const lines = [{ label: "All shown groups", values: total }, ...series];
  const data = weeks.map((w, i) => {
    const point: Record<string, string | number | null> = { week: w.slice(5) };
    lines.forEach((l, k) => {
      point[`s${k}`] = l.values[i];
    });
    return point;
  });
  const gaps = lines.some((l) => l.values.some((v) => v === null));
  const last = total[total.length - 1];
  // A chart with nothing to draw says so instead of showing an empty frame.
  if (!lines.some((l) => l.values.some((v) => v !== null)))
    return (
      <PanelNote>
        Every running total would give away a hidden number, so there is no line to draw yet. The table below shows the
        periods whose figures can be shown.
      </PanelNote>
    );
  return (
    <figure className="grid gap-2" aria-labelledby="planned-chart-caption">
      <figcaption id="planned-chart-caption" className="font-semibold">
        {title}{" "}
        <span className="block text-sm font-normal text-ink-soft">
          x axis: the last week of each period (month-day)
        </span>
      </figcaption>
      <ChartFrame
        label={`Line chart of cumulative planned ready counts over ${weeks.length} weeks${last != null ? `, reaching ${last} by the last week` : ""}; the table below lists the weekly numbers.`}
        height={300}
      >
        <LineChart
          responsive
          style={{ width: "100%", height: 300 }}
          data={data}
          margin={{ top: 8, right: 16, bottom: 8, left: 0 }}
        >
          <CartesianGrid strokeDasharray="3 3" />
          <XAxis dataKey="week" tick={{ fontSize: 11 }} height={30} />
          <YAxis allowDecimals={false} width={40} tick={{ fontSize: 11 }} />
          <Tooltip formatter={(v: unknown) => (v == null ? "hidden" : String(v))} />
          <Legend wrapperStyle={{ fontSize: 12 }} />
          {lines.map((l, k) => (
            <Line
              key={l.label}
              type="stepAfter"
              dataKey={`s${k}`}
              name={l.label}
              stroke={COLOURS[k % COLOURS.length]}
              strokeWidth={k === 0 ? 3 : 2}
              strokeDasharray={k === 0 ? undefined : "5 3"}
              dot={false}
              connectNulls={false}
              isAnimationActive={false}
            />
          ))}
        </LineChart>
      </ChartFrame>
      {gaps && (
        <p className="text-sm text-ink-soft">
          Gaps in a line are weeks whose running total would give away a hidden number.
        </p>
      )}
    </figure>
  );
}

// ── the board's panels, shared by the department and site views ─────────────────────────────────

function PanelNote({ children }: { children: string }) {
  return (
    <p className="rounded-md bg-spruce-50 p-3 text-sm text-spruce-800" role="note">
      {children}
    </p>
  );
}

const hours = (v: number) => `${v.toFixed(1)} h`;

export function ReadinessBoardView({ board, level }: { board: ReadinessBoard; level: "department" | "site" }) {
  const t = board.threshold;
  const rowHeader = level === "department" ? "Department" : "Site";
  const pick = <T,>(v: { department: T | null; site: T | null }) => v[level];
  return (
    <div className="grid grid-cols-1 gap-6">
      {board.stage.status !== "off" && (
        <section className="card grid grid-cols-1 gap-3" aria-labelledby={`stage-${level}`}>
          <h2 id={`stage-${level}`} className="text-lg font-semibold">
            People by readiness stage
          </h2>
          {board.stage.status === "ok" && <GroupingNote grouping={board.stage.grouping} />}
          {board.stage.status === "ok" ? (
            pick(board.stage) ? (
              <ProtectedTableView
                id={`stage-table-${level}`}
                caption={`People on the roster by stage, per ${rowHeader.toLowerCase()}`}
                rowHeader={rowHeader}
                {...pick(board.stage)!}
              />
            ) : (
              <PanelNote>{`Your organisation does not show readiness per ${rowHeader.toLowerCase()} to managers.`}</PanelNote>
            )
          ) : (
            <PanelNote>{board.stage.reason}</PanelNote>
          )}
        </section>
      )}
      {board.ready.status !== "off" && (
        <section className="card grid grid-cols-1 gap-3" aria-labelledby={`ready-${level}`}>
          <h2 id={`ready-${level}`} className="text-lg font-semibold">
            Ready per device type
          </h2>
          <p className="text-sm text-ink-soft">
            People who have met the proficiency criterion on each device type. One person can be ready on several types,
            so the totals count person-device pairs.
          </p>
          {board.ready.status === "ok" && <GroupingNote grouping={board.ready.grouping} />}
          {board.ready.status === "ok" ? (
            pick(board.ready) ? (
              <ProtectedTableView
                id={`ready-table-${level}`}
                caption={`Proficient people per device type, per ${rowHeader.toLowerCase()}`}
                rowHeader={rowHeader}
                {...pick(board.ready)!}
              />
            ) : (
              <PanelNote>{`Your organisation does not show readiness per ${rowHeader.toLowerCase()} to managers.`}</PanelNote>
            )
          ) : (
            <PanelNote>{board.ready.reason}</PanelNote>
          )}
        </section>
      )}
      {board.planned.status !== "off" && level === "department" && (
        <section className="card grid grid-cols-1 gap-3" aria-labelledby="planned">
          <h2 id="planned" className="text-lg font-semibold">
            Planned ready by week
          </h2>
          <p className="text-sm text-ink-soft">
            From published training plans: the week of each person's last scheduled session on a device type. Weeks are
            joined into periods of up to four weeks where single weeks would hold only a few people.
          </p>
          {board.planned.status === "ok" ? (
            <>
              <ReadinessChart
                title="Cumulative person-device pairs planned to be ready"
                weeks={board.planned.weeks}
                total={board.planned.cumulative.total}
                series={board.planned.table.columns.map((c, j) => ({
                  label: c,
                  values: board.planned.status === "ok" ? board.planned.cumulative.columns[j] : [],
                }))}
              />
              <ProtectedTableView
                id="planned-table"
                caption="Newly ready per period of one to four weeks (person-device pairs)"
                rowHeader="Weeks"
                {...board.planned.table}
              />
            </>
          ) : (
            <PanelNote>{board.planned.reason}</PanelNote>
          )}
        </section>
      )}
      {board.medians.status !== "off" && (
        <section className="card grid grid-cols-1 gap-3" aria-labelledby={`medians-${level}`}>
          <h2 id={`medians-${level}`} className="text-lg font-semibold">
            Median forecast training hours
          </h2>
          <p className="text-sm text-ink-soft">{`The middle value of the current forecasts of total training hours, shown only for groups of at least ${t} people. Forecasts are decision support, not a promise.`}</p>
          {board.medians.status === "ok" ? (
            pick(board.medians) ? (
              <ProtectedTableView
                id={`medians-table-${level}`}
                caption={`Median forecast hours per device type, per ${rowHeader.toLowerCase()}`}
                rowHeader={rowHeader}
                format={hours}
                hiddenMeaning={`Hidden: fewer than ${t} people in this group have a forecast.`}
                {...pick(board.medians)!}
              />
            ) : (
              <PanelNote>{`Your organisation does not show readiness per ${rowHeader.toLowerCase()} to managers.`}</PanelNote>
            )
          ) : (
            <PanelNote>{board.medians.reason}</PanelNote>
          )}
        </section>
      )}
    </div>
  );
}
