import { CartesianGrid, ComposedChart, ErrorBar, ReferenceLine, Scatter, Tooltip, XAxis, YAxis } from "recharts";
import { EXCLUSION_LABELS } from "~/schemas/forecast";
import { ChartFrame } from "./chart-frame";
import { CoefficientChart, type CoefficientDatum } from "./coefficient-chart";

// Leave-one-out calibration (predicted vs actual hours, each trainee predicted by a model fitted without
// them) and in-sample residuals. Points are de-identified and sorted; no worker is named.
export interface CalibrationDatum {
  actual: number;
  predicted: number;
  lower: number;
  upper: number;
}

export function CalibrationChart({ points }: { points: CalibrationDatum[] }) {
  const max = Math.max(1, ...points.flatMap((p) => [p.actual, p.upper])) * 1.05;
  const data = points.map((p) => ({
    predicted: p.predicted,
    actual: p.actual,
    err: [p.predicted - p.lower, p.upper - p.predicted],
  }));
  return (
    <figure className="grid gap-2" aria-labelledby="cal-caption">
      <ChartFrame label={`Predicted against actual hours for ${points.length} past trainees.`}>
        <ComposedChart
          responsive
          data={data}
          style={{ width: "100%", height: 320 }}
          margin={{ top: 8, right: 16, bottom: 24, left: 8 }}
        >
          <CartesianGrid strokeDasharray="3 3" />
          <XAxis
            type="number"
            dataKey="predicted"
            domain={[0, Math.ceil(max)]}
            tickFormatter={(v: number) => v.toFixed(0)}
            label={{ value: "Predicted hours (leave-one-out)", position: "insideBottom", offset: -14, fontSize: 12 }}
          />
          <YAxis
            type="number"
            dataKey="actual"
            domain={[0, Math.ceil(max)]}
            tickFormatter={(v: number) => v.toFixed(0)}
            label={{ value: "Actual hours", angle: -90, position: "insideLeft", fontSize: 12 }}
            width={56}
          />
          <ReferenceLine
            segment={[
              { x: 0, y: 0 },
              { x: Math.ceil(max), y: Math.ceil(max) },
            ]}
            stroke="#8a5a00"
            strokeDasharray="5 4"
          />
          <Tooltip formatter={(v) => (typeof v === "number" ? `${v.toFixed(1)} h` : String(v))} />
          <Scatter dataKey="actual" fill="#17574a" name="Actual">
            <ErrorBar dataKey="err" direction="x" width={3} stroke="#94a3b8" />
          </Scatter>
        </ComposedChart>
      </ChartFrame>
      <figcaption id="cal-caption" className="text-sm text-ink-soft">
        Each dot is one past trainee, predicted by a model fitted without them; grey bars are their 80 % intervals. Dots
        on the dashed line were predicted exactly.
      </figcaption>
    </figure>
  );
}

export function ResidualChart({ points }: { points: { fitted: number; residual: number }[] }) {
  return (
    <figure className="grid gap-2" aria-labelledby="res-caption">
      <ChartFrame label={`Residuals on the log scale against fitted hours for ${points.length} past trainees.`}>
        <ComposedChart
          responsive
          data={points}
          style={{ width: "100%", height: 240 }}
          margin={{ top: 8, right: 16, bottom: 24, left: 8 }}
        >
          <CartesianGrid strokeDasharray="3 3" />
          <XAxis
            type="number"
            dataKey="fitted"
            domain={["auto", "auto"]}
            tickFormatter={(v: number) => v.toFixed(0)}
            label={{ value: "Fitted hours", position: "insideBottom", offset: -14, fontSize: 12 }}
          />
          <YAxis
            type="number"
            dataKey="residual"
            domain={["auto", "auto"]}
            tickFormatter={(v: number) => v.toFixed(2)}
            width={56}
            label={{ value: "Residual (log)", angle: -90, position: "insideLeft", fontSize: 12 }}
          />
          <ReferenceLine y={0} stroke="#4a5565" />
          <Scatter dataKey="residual" fill="#1f6b5c" name="Residual" />
        </ComposedChart>
      </ChartFrame>
      <figcaption id="res-caption" className="text-sm text-ink-soft">
        Residuals (actual minus fitted, log-hours) should scatter evenly around 0 with no funnel or curve.
      </figcaption>
    </figure>
  );
}

export interface DiagnosticsData {
  cohortSize: number;
  excluded: Partial<Record<keyof typeof EXCLUSION_LABELS, number>>;
  coefficients: (CoefficientDatum & { se: number; code: string | null; multiplierPerSD: number })[];
  residualSD: number;
  dfResidual: number;
  rSquared: number;
  loocvMaeHours: number;
  loocvCoverage80: number;
  calibration: CalibrationDatum[];
  residuals?: { fitted: number; residual: number }[];
}

/** Cohort and exclusions, accuracy figures, coefficient table and chart, calibration and residuals. */
export function ModelDiagnostics({ fit }: { fit: DiagnosticsData }) {
  const excluded = Object.entries(fit.excluded).filter(([, n]) => n > 0) as [keyof typeof EXCLUSION_LABELS, number][];
  const totalExcluded = excluded.reduce((s, [, n]) => s + n, 0);
  const measures = fit.coefficients.slice(1);
  return (
    <div className="grid gap-6" data-testid="diagnostics">
      <section className="card" aria-labelledby="cohort-h">
        <h2 id="cohort-h" className="text-lg font-semibold">
          Cohort
        </h2>
        <p>
          <strong data-testid="cohort-size">{fit.cohortSize}</strong> past trainees with model-use consent who reached
          the criterion and have every chosen measure. <strong data-testid="excluded-total">{totalExcluded}</strong>{" "}
          records were left out:
        </p>
        <ul className="mt-2 list-disc pl-5 text-sm" data-testid="exclusions">
          {excluded.length === 0 && <li>none</li>}
          {excluded.map(([reason, n]) => (
            <li key={reason} data-reason={reason}>
              <strong>{n}</strong> — {EXCLUSION_LABELS[reason]}
            </li>
          ))}
        </ul>
      </section>
      <section className="card grid gap-3 sm:grid-cols-4" aria-label="Cross-validated accuracy">
        <div>
          <p className="text-sm text-ink-soft">LOOCV mean absolute error</p>
          <p className="text-2xl font-semibold" data-testid="mae">
            {fit.loocvMaeHours.toFixed(1)} h
          </p>
        </div>
        <div>
          <p className="text-sm text-ink-soft">80 % interval coverage (LOOCV)</p>
          <p className="text-2xl font-semibold" data-testid="coverage">
            {Math.round(fit.loocvCoverage80 * 100)} %
          </p>
        </div>
        <div>
          <p className="text-sm text-ink-soft">R² (in sample, log-hours)</p>
          <p className="text-2xl font-semibold" data-testid="r2">
            {fit.rSquared.toFixed(3)}
          </p>
        </div>
        <div>
          <p className="text-sm text-ink-soft">Residual SD (log) · df</p>
          <p className="text-2xl font-semibold">
            {fit.residualSD.toFixed(3)} ·{" "}
            {Number.isInteger(fit.dfResidual) ? fit.dfResidual : fit.dfResidual.toFixed(1)}
          </p>
        </div>
      </section>
      <section className="card overflow-x-auto" aria-labelledby="coef-h">
        <h2 id="coef-h" className="text-lg font-semibold">
          Coefficients
        </h2>
        <p className="text-sm text-ink-soft">
          Log-hours per SD better than the cohort average on each measure (z-scores are standardised within the cohort).
          ×factor = hours multiply by this per SD.
        </p>
        <table className="table-base mt-2" data-testid="coefficients">
          <caption className="sr-only">Coefficient estimates, standard errors and 95 % confidence intervals</caption>
          <thead>
            <tr>
              <th scope="col">Term</th>
              <th scope="col">Estimate</th>
              <th scope="col">SE</th>
              <th scope="col">95 % CI</th>
              <th scope="col">×factor</th>
            </tr>
          </thead>
          <tbody>
            {fit.coefficients.map((c) => (
              <tr key={c.name}>
                <th scope="row" className="font-normal">
                  {c.name}
                </th>
                <td>{c.estimate.toFixed(4)}</td>
                <td>{c.se.toFixed(4)}</td>
                <td>
                  {c.lower95.toFixed(3)} to {c.upper95.toFixed(3)}
                </td>
                <td>{c.code ? `×${c.multiplierPerSD.toFixed(3)}` : `${c.multiplierPerSD.toFixed(1)} h at average`}</td>
              </tr>
            ))}
          </tbody>
        </table>
        {measures.length > 0 && (
          <div className="mt-4">
            <CoefficientChart rows={measures} />
          </div>
        )}
      </section>
      <section className="card" aria-labelledby="cal-h">
        <h2 id="cal-h" className="text-lg font-semibold">
          Calibration (leave-one-out)
        </h2>
        <CalibrationChart points={fit.calibration} />
        {fit.residuals && (
          <div className="mt-4">
            <h3 className="font-semibold">Residuals</h3>
            <ResidualChart points={fit.residuals} />
          </div>
        )}
      </section>
    </div>
  );
}
