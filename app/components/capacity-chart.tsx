import { useId, useState } from "react";
import { Bar, CartesianGrid, ComposedChart, Line, Tooltip, XAxis, YAxis } from "recharts";
import { round1 } from "~/compute/rounding";
import { ChartFrame } from "./chart-frame";

// Capacity use per week of one resource (a device type at a site, or a trainer): bars = hours used,
// line = hours available. A table with the same numbers follows for screen readers and keyboard users.
export interface CapacityPoint {
  week: number;
  used: number;
  capacity: number;
}

export function CapacityChart({ title, unit, points }: { title: string; unit: string; points: CapacityPoint[] }) {
  const data = points.map((p) => ({ week: `W${p.week + 1}`, used: round1(p.used), capacity: round1(p.capacity) }));
  const total = points.reduce((s, p) => s + p.used, 0);
  const cap = points.reduce((s, p) => s + p.capacity, 0);
  const summary = `${title}: ${round1(total)} of ${round1(cap)} ${unit} used over ${points.length} weeks (${cap > 0 ? Math.round((100 * total) / cap) : 0} %).`;
  return (
    <figure className="card grid gap-1 p-3">
      <figcaption className="text-sm font-semibold">{title}</figcaption>
      <p className="text-xs text-ink-soft">{summary}</p>
      <ChartFrame label={summary}>
        <ComposedChart
          responsive
          data={data}
          style={{ width: "100%", height: 160 }}
          margin={{ top: 6, right: 8, bottom: 0, left: 0 }}
        >
          <CartesianGrid strokeDasharray="3 3" vertical={false} />
          <XAxis dataKey="week" fontSize={11} interval="preserveStartEnd" />
          <YAxis fontSize={11} width={32} />
          <Tooltip formatter={(v, n) => [`${v} ${unit}`, n === "used" ? "used" : "available"]} />
          <Bar dataKey="used" name="used" fill="#1f6b5c" isAnimationActive={false} />
          <Line
            dataKey="capacity"
            name="available"
            stroke="#8a5a00"
            strokeDasharray="4 3"
            dot={false}
            isAnimationActive={false}
          />
        </ComposedChart>
      </ChartFrame>
      <details className="text-xs">
        <summary className="cursor-pointer">Numbers</summary>
        <table className="table-base mt-1">
          <caption className="sr-only">{title} per week</caption>
          <thead>
            <tr>
              <th scope="col">Week</th>
              <th scope="col">Used ({unit})</th>
              <th scope="col">Available ({unit})</th>
            </tr>
          </thead>
          <tbody>
            {data.map((d) => (
              <tr key={d.week}>
                <th scope="row">{d.week}</th>
                <td>{d.used}</td>
                <td>{d.capacity}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </details>
    </figure>
  );
}

export interface CapacityResource {
  kind: string;
  id: string;
  points: CapacityPoint[];
}

/**
 * All resources' capacity use in one chart with a selector, opening on the fullest resource (highest share of
 * its hours used), so the run page shows one chart instead of one per device type and trainer.
 */
export function CapacityExplorer({ resources }: { resources: CapacityResource[] }) {
  const share = (r: CapacityResource) => {
    const cap = r.points.reduce((s, p) => s + p.capacity, 0);
    return cap > 0 ? r.points.reduce((s, p) => s + p.used, 0) / cap : 0;
  };
  const key = (r: CapacityResource) => `${r.kind}|${r.id}`;
  const fullest = [...resources].sort((a, b) => share(b) - share(a))[0];
  const [chosen, setChosen] = useState(fullest ? key(fullest) : "");
  const id = useId();
  if (!fullest) return <p className="text-ink-soft">No capacity use to show.</p>;
  const current = resources.find((r) => key(r) === chosen) ?? fullest;
  const label = (r: CapacityResource) =>
    `${r.kind === "device" ? "Device type" : "Trainer"}: ${r.id} (${Math.round(share(r) * 100)} % used)`;
  return (
    <div className="grid gap-2">
      <div>
        <label htmlFor={id} className="field-label">
          Resource
        </label>
        <select
          id={id}
          className="field-input max-w-full"
          value={key(current)}
          onChange={(e) => setChosen(e.target.value)}
          data-testid="capacity-select"
        >
          {["device", "trainer"].map((kind) => (
            <optgroup key={kind} label={kind === "device" ? "Device types (device-hours)" : "Trainers (trainer-hours)"}>
              {resources
                .filter((r) => r.kind === kind)
                .map((r) => (
                  <option key={key(r)} value={key(r)}>
                    {label(r)}
                  </option>
                ))}
            </optgroup>
          ))}
        </select>
      </div>
      <CapacityChart
        title={`${current.kind === "device" ? "Device type" : "Trainer"} ${current.id}: hours used (bars) and available (line) per week`}
        unit={current.kind === "device" ? "device-hours" : "trainer-hours"}
        points={current.points}
      />
    </div>
  );
}
