import { CartesianGrid, ErrorBar, ReferenceLine, Scatter, ScatterChart, Tooltip, XAxis, YAxis } from "recharts";
import { ChartFrame } from "./chart-frame";

// Forest plot of a model's measure coefficients (log-hours per cohort SD) with 95 % intervals.
// The intercept is left out: it sits on another scale (the cohort's average log-hours).
export interface CoefficientDatum {
  name: string;
  estimate: number;
  lower95: number;
  upper95: number;
}

export function CoefficientChart({ rows }: { rows: CoefficientDatum[] }) {
  // One row per measure on a numeric axis (index), labelled with the measure's name.
  const data = rows.map((r, i) => ({
    row: i,
    name: r.name,
    estimate: r.estimate,
    err: [r.estimate - r.lower95, r.upper95 - r.estimate],
  }));
  const height = 80 + 44 * data.length;
  return (
    <figure className="grid gap-2" aria-labelledby="coef-caption">
      <ChartFrame label="Coefficient estimates with 95 % intervals; the same numbers are in the coefficient table.">
        <ScatterChart responsive style={{ width: "100%", height }} margin={{ top: 8, right: 16, bottom: 24, left: 8 }}>
          <CartesianGrid strokeDasharray="3 3" horizontal={false} />
          <XAxis
            type="number"
            dataKey="estimate"
            domain={["auto", "auto"]}
            tickFormatter={(v: number) => v.toFixed(2)}
            label={{
              value: "log-hours per SD (negative = fewer hours)",
              position: "insideBottom",
              offset: -14,
              fontSize: 12,
            }}
          />
          <YAxis
            type="number"
            dataKey="row"
            reversed
            domain={[-0.5, data.length - 0.5]}
            ticks={data.map((d) => d.row)}
            interval={0}
            tickFormatter={(i: number) => data[i]?.name ?? ""}
            width={150}
            tick={{ fontSize: 12 }}
          />
          <ReferenceLine x={0} stroke="#4a5565" />
          <Tooltip
            formatter={(v, key) => (key === "row" ? null : typeof v === "number" ? v.toFixed(3) : String(v))}
            labelFormatter={() => ""}
          />
          <Scatter data={data} fill="#17574a" name="Estimate" isAnimationActive={false}>
            <ErrorBar dataKey="err" direction="x" width={6} stroke="#17574a" />
          </Scatter>
        </ScatterChart>
      </ChartFrame>
      <figcaption id="coef-caption" className="text-sm text-ink-soft">
        Each dot is a measure's effect on log(hours) for one SD better than the cohort average; the bar is its 95 %
        confidence interval. A bar crossing 0 means the cohort cannot tell the effect from none.
      </figcaption>
    </figure>
  );
}
