import { requireUser } from "~/auth/guard.server";
import { MAX_RETEST_DAYS, MIN_RETEST_N, reliabilityByMeasure } from "~/models/reliability-report.server";
import type { Route } from "./+types/assess.reliability";

export const meta: Route.MetaFunction = () => [{ title: "Reliability · Limberly" }];

// Aggregate test–retest statistics per measure; no worker is identifiable here.
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "assessments.read");
  return { rows: await reliabilityByMeasure(), minN: MIN_RETEST_N, maxDays: MAX_RETEST_DAYS };
}

const f = (v: number | null, d = 3) => (v == null ? "—" : Math.abs(v) >= 100 ? v.toFixed(1) : v.toPrecision(d));

export default function Reliability({ loaderData }: Route.ComponentProps) {
  return (
    <div className="grid gap-4">
      <div>
        <h1 className="page-title">Test–retest reliability</h1>
        <p className="text-ink-soft">
          From each worker's first two baselines of a measure, when at most {loaderData.maxDays} days apart (at least{" "}
          {loaderData.minN} workers). ICC(2,1): two-way random, absolute agreement; ICC(3,1): two-way mixed, consistency
          (Shrout &amp; Fleiss 1979). SEM = SD·√(1 − ICC(2,1)) with SD of the first baselines; MDC95 = 1.96·√2·SEM: a
          change larger than this is unlikely to be measurement error. The 95 % confidence interval of ICC(2,1) follows
          McGraw &amp; Wong (1996); the reading follows Koo &amp; Li (2016): below 0.5 poor, 0.5–0.75 moderate, 0.75–0.9
          good, above 0.9 excellent. With few workers the interval is wide: read the label with it.
        </p>
      </div>
      <div className="card overflow-x-auto p-0">
        <table className="table-base" data-testid="reliability-table">
          <caption className="sr-only">Reliability per measure</caption>
          <thead>
            <tr>
              <th scope="col">Measure</th>
              <th scope="col">Workers</th>
              <th scope="col">ICC(2,1)</th>
              <th scope="col">ICC(3,1)</th>
              <th scope="col">SD</th>
              <th scope="col">SEM</th>
              <th scope="col">MDC95</th>
              <th scope="col">ICC(2,1) 95 % CI</th>
              <th scope="col">Reading</th>
            </tr>
          </thead>
          <tbody>
            {loaderData.rows.map((r) => (
              <tr key={r.measureId}>
                <th scope="row" className="font-normal">
                  {r.name}
                  {r.note && <span className="block text-xs text-ink-soft">{r.note}</span>}
                </th>
                <td>{r.n}</td>
                <td>{f(r.icc21)}</td>
                <td>{f(r.icc31)}</td>
                <td>{f(r.sd)}</td>
                <td>{f(r.sem)}</td>
                <td>{r.mdc95 == null ? "—" : `${f(r.mdc95)} ${r.unit}`}</td>
                <td>
                  {r.icc21Lower == null || r.icc21Upper == null
                    ? "—"
                    : `${f(r.icc21Lower, 2)} to ${f(r.icc21Upper, 2)}`}
                </td>
                <td data-testid="reliability-label">{r.label ?? "not enough data"}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
