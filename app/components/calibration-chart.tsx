import {
  Bar,
  BarChart,
  CartesianGrid,
  ComposedChart,
  ErrorBar,
  ReferenceLine,
  Scatter,
  Tooltip,
  XAxis,
  YAxis,
} from "recharts";
import { EXCLUSION_LABELS, percentileLabel } from "~/schemas/forecast";
import { ChartFrame } from "./chart-frame";
import { CoefficientChart, type CoefficientDatum } from "./coefficient-chart";

// The model's checks as the assessor reads them: cohort (completed and censored courses), the planning
// figure checked by leaving out one past trainee at a time (overall, by risk group, and with stopped
// courses as misses), predicted against actual hours, coefficients, and the exact methods in a panel.
// Points are de-identified and sorted; no worker is named.
export interface CalibrationDatum {
  actual: number;
  predicted: number;
  lower: number;
  upper: number;
  completed?: boolean;
}

const pct = (v: number | null | undefined) => (v == null ? "—" : `${Math.round(v * 100)} %`);

export function CalibrationChart({ points }: { points: CalibrationDatum[] }) {
  const max = Math.max(1, ...points.flatMap((p) => [p.actual, p.upper])) * 1.05;
  const toDatum = (p: CalibrationDatum) => ({
    predicted: p.predicted,
    actual: p.actual,
    err: [p.predicted - p.lower, p.upper - p.predicted],
  });
  const done = points.filter((p) => p.completed !== false).map(toDatum);
  const running = points.filter((p) => p.completed === false).map(toDatum);
  return (
    <figure className="grid gap-2" aria-labelledby="cal-caption">
      <ChartFrame
        label={`Predicted against actual hours for ${points.length} past trainees, ${running.length} of them still in training or stopped (hours so far).`}
      >
        <ComposedChart
          responsive
          style={{ width: "100%", height: 320 }}
          margin={{ top: 8, right: 16, bottom: 24, left: 8 }}
        >
          <CartesianGrid strokeDasharray="3 3" />
          <XAxis
            type="number"
            dataKey="predicted"
            domain={[0, Math.ceil(max)]}
            tickFormatter={(v: number) => v.toFixed(0)}
            label={{
              value: "Predicted hours (without this trainee)",
              position: "insideBottom",
              offset: -14,
              fontSize: 12,
            }}
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
          <Scatter data={done} dataKey="actual" fill="#17574a" name="Reached the criterion">
            <ErrorBar dataKey="err" direction="x" width={3} stroke="#94a3b8" />
          </Scatter>
          <Scatter
            data={running}
            dataKey="actual"
            fill="#ffffff"
            stroke="#8a5a00"
            name="Hours so far (still training or stopped)"
          />
        </ComposedChart>
      </ChartFrame>
      <figcaption id="cal-caption" className="text-sm text-ink-soft">
        Each mark is one past trainee, predicted by a model fitted without them; grey bars are their 80 % intervals.
        Filled dots reached the criterion; open amber dots were still in training when the data was taken (or stopped):
        their true hours are higher than shown. Dots on the dashed line were predicted exactly.
      </figcaption>
    </figure>
  );
}

export interface RiskGroupDatum {
  label: string;
  courses: number;
  planningFrom: number;
  planningTo: number;
  coverage: number | null;
  standardError: number | null;
}

/** Share finishing within their planning figure per risk group, with 95 % bars, against the target. */
export function RiskGroupChart({ groups, target }: { groups: RiskGroupDatum[]; target: number }) {
  const data = groups.map((g) => {
    const c = g.coverage ?? 0;
    const half = g.standardError == null ? 0 : 1.96 * g.standardError;
    return {
      label: g.label,
      share: Math.round(c * 1000) / 10,
      err: [Math.min(c, half) * 100, Math.min(1 - c, half) * 100],
    };
  });
  const summary = groups
    .map((g) => `${g.label}: ${pct(g.coverage)} of ${g.courses} finished within their planning figure`)
    .join("; ");
  return (
    <figure className="grid gap-2" aria-labelledby="risk-caption">
      <ChartFrame label={`${summary}. Target ${pct(target)}.`} testId="risk-group-chart">
        <BarChart
          responsive
          data={data}
          style={{ width: "100%", height: 260 }}
          margin={{ top: 8, right: 16, bottom: 8, left: 8 }}
        >
          <CartesianGrid strokeDasharray="3 3" vertical={false} />
          <XAxis dataKey="label" tick={{ fontSize: 12 }} interval={0} />
          <YAxis domain={[0, 100]} tickFormatter={(v: number) => `${v} %`} width={52} />
          <Tooltip formatter={(v) => (typeof v === "number" ? `${v.toFixed(0)} %` : String(v))} />
          <ReferenceLine y={target * 100} stroke="#8a5a00" strokeDasharray="5 4" />
          <Bar dataKey="share" fill="#17574a" name="Finished within the planning figure">
            <ErrorBar dataKey="err" width={6} stroke="#1f2937" />
          </Bar>
        </BarChart>
      </ChartFrame>
      <figcaption id="risk-caption" className="text-sm text-ink-soft">
        Past trainees split into thirds by how long the model expected them to take. Bars: share who finished within
        their planning figure, counting those still in training for as long as they were followed; black lines: 95 %
        range; dashed line: the target {pct(target)}.
      </figcaption>
      <table className="table-base text-sm" data-testid="risk-groups">
        <caption className="sr-only">Planning figure by risk group</caption>
        <thead>
          <tr>
            <th scope="col">Group</th>
            <th scope="col">Trainees</th>
            <th scope="col">Planning figures</th>
            <th scope="col">Finished within</th>
          </tr>
        </thead>
        <tbody>
          {groups.map((g) => (
            <tr key={g.label}>
              <th scope="row" className="font-normal">
                {g.label}
              </th>
              <td>{g.courses}</td>
              <td>
                {g.planningFrom.toFixed(0)}–{g.planningTo.toFixed(0)} h
              </td>
              <td data-testid="risk-share">{pct(g.coverage)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </figure>
  );
}

export interface DiagnosticsData {
  method?: "lognormal-aft" | "least-squares";
  cohortSize: number;
  completed?: number | null;
  stillTraining?: number | null;
  stopped?: number | null;
  excluded: Partial<Record<keyof typeof EXCLUSION_LABELS, number>>;
  normSet?: { id: number; name: string } | null;
  coefficients: (CoefficientDatum & { se: number; code: string | null; multiplierPerSD: number })[];
  residualSD: number;
  dfResidual: number;
  rSquared: number;
  loocvMaeHours: number;
  loocvCoverage80: number;
  planningQuantile?: number | null;
  loocvPlanningCoverage?: number | null;
  loocvPlanningCoverageSE?: number | null;
  loocvCoverageStoppedAsMiss?: number | null;
  riskGroups?: RiskGroupDatum[];
  calibration: CalibrationDatum[];
  reliabilityWarnings?: { label: string; message: string }[];
}

/** Cohort, the planning figure's check, reliability warnings, coefficients, calibration, and the methods. */
export function ModelDiagnostics({ fit }: { fit: DiagnosticsData }) {
  const excluded = Object.entries(fit.excluded).filter(([, n]) => (n ?? 0) > 0) as [
    keyof typeof EXCLUSION_LABELS,
    number,
  ][];
  const totalExcluded = excluded.reduce((s, [, n]) => s + n, 0);
  const measures = fit.coefficients.slice(1);
  const censoredFit = fit.method === "lognormal-aft";
  const q = fit.planningQuantile ?? null;
  return (
    <div className="grid gap-6" data-testid="diagnostics">
      {fit.reliabilityWarnings && fit.reliabilityWarnings.length > 0 && (
        <section
          className="rounded-md bg-amber-wash p-3 text-amber-caution"
          aria-labelledby="rel-h"
          data-testid="reliability-warnings"
        >
          <h2 id="rel-h" className="font-semibold">
            Measures to treat with care
          </h2>
          <ul className="mt-1 list-disc pl-5 text-sm">
            {fit.reliabilityWarnings.map((w) => (
              <li key={w.label}>{w.message}</li>
            ))}
          </ul>
        </section>
      )}
      <section className="card" aria-labelledby="cohort-h">
        <h2 id="cohort-h" className="text-lg font-semibold">
          Cohort
        </h2>
        {censoredFit ? (
          <p>
            <strong data-testid="cohort-size">{fit.cohortSize}</strong> past trainees with model-use consent and every
            chosen measure: <strong data-testid="completed">{fit.completed}</strong> reached the criterion,{" "}
            <strong data-testid="still-training">{fit.stillTraining}</strong> were still in training when the data was
            taken and <strong data-testid="stopped">{fit.stopped}</strong> stopped. Those still in training or stopped
            count for the hours they reached (they took at least that long).
          </p>
        ) : (
          <p>
            <strong data-testid="cohort-size">{fit.cohortSize}</strong> past trainees who reached the criterion (this
            older version left out everyone still in training, so its figures tend to be too short).
          </p>
        )}
        {fit.normSet && (
          <p className="mt-1 text-sm">
            Baseline measures scored with the norm set <strong data-testid="norm-set">{fit.normSet.name}</strong>, now
            and whenever this version makes a forecast.
          </p>
        )}
        <p className="mt-2">
          <strong data-testid="excluded-total">{totalExcluded}</strong> records were left out:
        </p>
        <ul className="mt-1 list-disc pl-5 text-sm" data-testid="exclusions">
          {excluded.length === 0 && <li>none</li>}
          {excluded.map(([reason, n]) => (
            <li key={reason} data-reason={reason}>
              <strong>{n}</strong> — {EXCLUSION_LABELS[reason]}
            </li>
          ))}
        </ul>
      </section>
      <section className="card grid gap-3" aria-labelledby="check-h">
        <h2 id="check-h" className="text-lg font-semibold">
          Checked by leaving out one past trainee at a time
        </h2>
        <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
          {q != null && fit.loocvPlanningCoverage != null && (
            <div>
              <p className="text-sm text-ink-soft">Finished within their planning figure ({percentileLabel(q)})</p>
              <p className="text-2xl font-semibold" data-testid="planning-coverage">
                {pct(fit.loocvPlanningCoverage)}
              </p>
              <p className="text-xs text-ink-soft">
                target {pct(q)}
                {fit.loocvPlanningCoverageSE != null
                  ? ` · ±${Math.round(196 * fit.loocvPlanningCoverageSE)} points (95 %)`
                  : ""}
              </p>
            </div>
          )}
          {fit.loocvCoverageStoppedAsMiss != null && (
            <div>
              <p className="text-sm text-ink-soft">The same if every stopped course counts as a miss</p>
              <p className="text-2xl font-semibold" data-testid="stopped-as-miss">
                {pct(fit.loocvCoverageStoppedAsMiss)}
              </p>
            </div>
          )}
          <div>
            <p className="text-sm text-ink-soft">Inside their 80 % range</p>
            <p className="text-2xl font-semibold" data-testid="coverage">
              {pct(fit.loocvCoverage80)}
            </p>
          </div>
          <div>
            <p className="text-sm text-ink-soft">
              Typical miss of the middle forecast{censoredFit ? " (those who finished)" : ""}
            </p>
            <p className="text-2xl font-semibold" data-testid="mae">
              {fit.loocvMaeHours.toFixed(1)} h
            </p>
          </div>
        </div>
        {fit.riskGroups && fit.riskGroups.length > 0 && q != null && (
          <RiskGroupChart groups={fit.riskGroups} target={q} />
        )}
      </section>
      <section className="card overflow-x-auto" aria-labelledby="coef-h">
        <h2 id="coef-h" className="text-lg font-semibold">
          How each measure moves the forecast
        </h2>
        <p className="text-sm text-ink-soft">
          Change in log-hours per SD better than the cohort average on each measure; ×factor = hours multiply by this
          per SD. Share of the spread in log-hours explained by the measures:{" "}
          <span data-testid="r2">{fit.rSquared.toFixed(3)}</span>.
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
          Predicted against actual hours
        </h2>
        <CalibrationChart points={fit.calibration} />
      </section>
      <details className="card" data-testid="how-computed">
        <summary className="cursor-pointer font-semibold">How this was computed</summary>
        <div className="mt-2 grid gap-2 text-sm">
          {censoredFit ? (
            <>
              <p>
                Model: log-normal accelerated failure time model, log(hours) = β·[1, x] + σ·ε with ε standard normal,
                fitted by censored maximum likelihood (Kalbfleisch &amp; Prentice,{" "}
                <em>The Statistical Analysis of Failure Time Data</em>, 2002, ch. 3) with Newton steps in Olsen's (1978)
                concave parameters. Courses still in training or stopped are right-censored at their hours so far. x =
                the baseline z-scores standardised with the cohort's mean and SD. Residual scale σ̂ ={" "}
                {fit.residualSD.toFixed(3)} (log-hours).
              </p>
              <p>
                Forecast for a new worker: Student t on the log scale with scale √(σ̂² + xᵀ Cov(β̂) x) and{" "}
                {fit.dfResidual} degrees of freedom (completed courses − coefficients). Coefficient intervals: Wald, β̂ ±
                1.96 SE from the observed information. R²: McKelvey &amp; Zavoina (1975), Var(β·x) / (Var(β·x) + σ̂²).
              </p>
              <p>
                Check: leave-one-out cross-validation (each trainee predicted by a refit without them). The share
                finishing within the planning figure is a Kaplan–Meier estimate (Kaplan &amp; Meier 1958) on hours ÷
                planning figure, censored courses at risk for as long as they were followed, with Greenwood's standard
                error; the 80 % range is judged the same way on the probability-integral-transform scale. Sensitivity:
                stopped courses counted as misses. Risk groups: thirds by held-out median forecast.
              </p>
            </>
          ) : (
            <p>
              Model: least squares of log(hours) on standardised baseline z-scores, on trainees who reached the
              criterion only; residual SD {fit.residualSD.toFixed(3)} with {fit.dfResidual} degrees of freedom;
              leave-one-out by the hat-matrix shortcut.
            </p>
          )}
          <p>
            Reliability warnings: test–retest ICC(2,1) (Shrout &amp; Fleiss 1979) below 0.5 is poor (Koo &amp; Li 2016,
            J Chiropr Med 15:155); a measure without enough repeated baselines is flagged as not known.
          </p>
        </div>
      </details>
    </div>
  );
}
