import {
  CartesianGrid,
  ComposedChart,
  Legend,
  Line,
  ReferenceArea,
  ReferenceLine,
  Scatter,
  Tooltip,
  XAxis,
  YAxis,
} from "recharts";
import { ChartFrame } from "./chart-frame";

// Session scores against cumulative hours, the fitted progress curve, the criterion line and the
// predicted crossing with its interval.
export interface ProgressChartProps {
  sessions: { cumulativeHours: number; score: number }[];
  curve: { hours: number; score: number }[];
  threshold: number | null;
  crossing: { hours: number; lower: number; upper: number } | null;
}

export function ProgressChart({ sessions, curve, threshold, crossing }: ProgressChartProps) {
  const maxX =
    Math.max(1, ...sessions.map((s) => s.cumulativeHours), ...curve.map((c) => c.hours), crossing?.upper ?? 0) * 1.02;
  const summary = `${sessions.length} session scores${threshold != null ? `, criterion ${threshold}` : ""}${crossing ? `, predicted to reach it at about ${crossing.hours.toFixed(1)} h (80 % interval ${crossing.lower.toFixed(1)}–${crossing.upper.toFixed(1)} h)` : ""}.`;
  return (
    <figure className="grid gap-2" aria-labelledby="progress-caption">
      <ChartFrame label={summary} testId="progress-chart">
        <ComposedChart
          responsive
          style={{ width: "100%", height: 320 }}
          margin={{ top: 8, right: 16, bottom: 24, left: 8 }}
        >
          <CartesianGrid strokeDasharray="3 3" />
          <XAxis
            type="number"
            dataKey="hours"
            domain={[0, Math.ceil(maxX)]}
            allowDuplicatedCategory={false}
            tickFormatter={(v: number) => v.toFixed(0)}
            label={{ value: "Cumulative practice hours", position: "insideBottom", offset: -14, fontSize: 12 }}
          />
          <YAxis
            type="number"
            domain={[0, 1]}
            ticks={[0, 0.2, 0.4, 0.6, 0.8, 1]}
            tickFormatter={(v: number) => v.toFixed(1)}
            width={44}
            label={{ value: "Task score", angle: -90, position: "insideLeft", fontSize: 12 }}
          />
          {crossing && (
            <ReferenceArea
              x1={crossing.lower}
              x2={Math.min(crossing.upper, Math.ceil(maxX))}
              fill="#fff4dc"
              fillOpacity={0.8}
              ifOverflow="hidden"
            />
          )}
          {crossing && (
            <ReferenceLine
              x={crossing.hours}
              stroke="#8a5a00"
              strokeDasharray="4 3"
              label={{ value: "predicted", position: "insideTopRight", fontSize: 11, fill: "#8a5a00" }}
            />
          )}
          {threshold != null && (
            <ReferenceLine
              y={threshold}
              stroke="#a1261b"
              strokeDasharray="6 3"
              label={{ value: `criterion ${threshold}`, position: "insideBottomRight", fontSize: 11, fill: "#a1261b" }}
            />
          )}
          <Tooltip
            formatter={(v) => (typeof v === "number" ? v.toFixed(2) : String(v))}
            labelFormatter={(v) => `${Number(v).toFixed(1)} h`}
          />
          <Legend verticalAlign="top" height={28} />
          {curve.length > 0 && (
            <Line
              data={curve}
              dataKey="score"
              name="Fitted curve"
              dot={false}
              stroke="#1f6b5c"
              strokeWidth={2}
              isAnimationActive={false}
            />
          )}
          <Scatter
            data={sessions.map((s) => ({ hours: s.cumulativeHours, score: s.score }))}
            dataKey="score"
            name="Session score"
            fill="#10443a"
            isAnimationActive={false}
          />
        </ComposedChart>
      </ChartFrame>
      <figcaption id="progress-caption" className="text-sm text-ink-soft">
        Dots: logged session scores. Line: fitted progress curve. Red dashed line: the proficiency criterion. Amber
        band: the 80 % interval of when the criterion is reached; the dashed amber line is its median.
      </figcaption>
    </figure>
  );
}
