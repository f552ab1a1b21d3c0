import { Bar, BarChart, CartesianGrid, Cell, ReferenceLine, Tooltip, XAxis, YAxis } from "recharts";
import { ChartFrame } from "./chart-frame";

// A worker's coordination profile: each measure's z-score (turned so positive = better) with its
// minimal detectable change (MDC95) drawn as a band in z units (MDC95 / norm SD) around the score.
// The table below the chart carries the same numbers for screen readers and print.
export interface ProfilePoint {
  measure: string;
  z: number;
  mdcZ: number | null;
  normSet: string | null;
  value: number;
  unit: string;
}

const fmt = (v: number, d = 2) => (Math.abs(v) >= 1000 ? v.toFixed(0) : v.toFixed(d));

export function ProfileChart({ points, title }: { points: ProfilePoint[]; title: string }) {
  if (points.length === 0)
    return (
      <p className="text-ink-soft">No z-scores yet: they need scored results and a norm set holding those measures.</p>
    );
  const data = points.map((p) => ({ ...p, band: p.mdcZ != null ? [p.z - p.mdcZ, p.z + p.mdcZ] : null }));
  const height = 60 + points.length * 34;
  const limit = Math.max(3, Math.ceil(Math.max(...points.map((p) => Math.abs(p.z) + (p.mdcZ ?? 0)))));
  // Legend in words, under the chart: solid bar = z-score; dashed box = MDC95 band around it.
  return (
    <figure className="grid gap-3" aria-labelledby="profile-caption">
      <figcaption id="profile-caption" className="font-semibold">
        {title}
      </figcaption>
      <ChartFrame
        label={`Bar chart of ${points.length} z-scores; the table below lists the same values.`}
        height={height}
      >
        <BarChart
          responsive
          style={{ width: "100%", height }}
          data={data}
          layout="vertical"
          barGap={-16}
          margin={{ top: 8, right: 16, bottom: 8, left: 8 }}
        >
          <CartesianGrid horizontal={false} strokeDasharray="3 3" />
          <XAxis
            type="number"
            domain={[-limit, limit]}
            tickCount={2 * limit + 1}
            label={{ value: "z (positive = better)", position: "insideBottom", offset: -4 }}
            height={40}
          />
          <YAxis type="category" dataKey="measure" width={140} tick={{ fontSize: 11 }} interval={0} />
          <ReferenceLine x={0} stroke="#1c2430" />
          <Tooltip
            formatter={(v: unknown, name: unknown, item: { payload?: ProfilePoint }) =>
              name === "band"
                ? [null, null]
                : [
                    `z = ${fmt(Number(v))}${item.payload?.mdcZ != null ? ` ± ${fmt(item.payload.mdcZ)} (MDC95)` : ""}`,
                    "score",
                  ]
            }
          />
          <Bar dataKey="z" isAnimationActive={false} barSize={16}>
            {data.map((d, i) => (
              // biome-ignore lint/suspicious/noArrayIndexKey: the bars follow the measures in a fixed order and are never reordered
              <Cell key={i} fill={d.z >= 0 ? "#1f6b5c" : "#8a5a00"} />
            ))}
          </Bar>
          {/* MDC95 band drawn over the bar's tip: a change of the score inside it is within measurement error. */}
          <Bar
            dataKey="band"
            isAnimationActive={false}
            barSize={16}
            fill="rgba(211,233,228,0.55)"
            stroke="#1c2430"
            strokeDasharray="3 2"
          />
        </BarChart>
      </ChartFrame>
      <p className="text-sm text-ink-soft">
        Solid bar: z-score against the norm set (positive = better). Dashed box: ± MDC95 in z units; a later score
        inside it is within measurement error.
      </p>
      <div className="overflow-x-auto">
        <table className="table-base" data-testid="profile-table">
          <caption className="sr-only">Profile values</caption>
          <thead>
            <tr>
              <th scope="col">Measure</th>
              <th scope="col">Value</th>
              <th scope="col">z</th>
              <th scope="col">MDC95 band (z)</th>
              <th scope="col">Norm set</th>
            </tr>
          </thead>
          <tbody>
            {points.map((p) => (
              <tr key={p.measure}>
                <th scope="row" className="font-normal">
                  {p.measure}
                </th>
                <td>
                  {fmt(p.value, 3)} {p.unit}
                </td>
                <td>{fmt(p.z)}</td>
                <td>{p.mdcZ != null ? `± ${fmt(p.mdcZ)}` : "not yet known"}</td>
                <td>{p.normSet ?? "—"}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </figure>
  );
}
