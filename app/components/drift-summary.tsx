import type { DriftStats } from "~/models/model-versions.server";
import { percentileLabel } from "~/schemas/forecast";

// How an approved version's planning figure holds up on the courses planned with it: counted as soon as a
// course's hours pass its figure, estimated with Kaplan–Meier, judged by a one-sided exact binomial test.
const pct = (v: number | null) => (v == null ? "—" : `${Math.round(v * 100)} %`);

/** One sentence: how many courses, the share within, and what the test says. */
export function driftSentence(d: DriftStats): string {
  if (d.courses === 0) return "No course planned with this version has trained yet.";
  const judged = d.within + d.missed;
  const share = d.coverage == null ? "" : ` About ${pct(d.coverage)} finish within their planning figure.`;
  return `${d.courses} courses planned with this version: ${d.within} finished within their planning figure, ${d.missed} went past it, ${d.pending} are still below it.${share}${judged === 0 ? "" : d.alarm ? ` That is too few for a ${percentileLabel(d.target)} (false-alarm rate ${pct(d.alpha)}).` : ` No sign that the figure runs short (checked at a false-alarm rate of ${pct(d.alpha)}).`}`;
}

export function DriftSummary({ drift, deviceTypeName }: { drift: DriftStats; deviceTypeName?: string }) {
  return (
    <div className="grid gap-2">
      <p className="text-sm" data-testid="drift">
        {driftSentence(drift)}
      </p>
      {drift.alarm && (
        <p role="alert" className="rounded-md bg-alert-wash p-3 text-alert" data-testid="drift-warning">
          Drift{deviceTypeName ? ` (${deviceTypeName})` : ""}: the planning figure runs short more often than it may —{" "}
          {drift.missed} of {drift.within + drift.missed} courses went past it. Plans based on it will run late;
          consider refitting.
        </p>
      )}
      {drift.pValue != null && (
        <p className="text-xs text-ink-soft">
          One-sided exact binomial test (Clopper &amp; Pearson 1934) of coverage below {pct(drift.target)}: p ={" "}
          {drift.pValue.toPrecision(2)}; upper {Math.round((1 - drift.alpha) * 100)} % bound for coverage{" "}
          {pct(drift.upperBound)}. A course counts as a miss as soon as its hours pass its figure.
        </p>
      )}
    </div>
  );
}
