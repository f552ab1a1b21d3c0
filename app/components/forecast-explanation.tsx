// How each baseline measure moved a worker's forecast (coefficient × standardised z-score), in plain words.
// Only ever given data from the clinical (assessor) view; coordinators' loaders never include it.
export interface ExplanationProps {
  baselineHours: number;
  medianHours: number;
  contributions: {
    measureCode: string;
    label: string;
    zScore: number;
    multiplier: number;
    logContribution: number;
    sentence: string;
  }[];
}

export function ForecastExplanation({ baselineHours, medianHours, contributions }: ExplanationProps) {
  const sorted = [...contributions].sort((a, b) => Math.abs(b.logContribution) - Math.abs(a.logContribution));
  return (
    <div className="grid gap-2" data-testid="forecast-explanation">
      <p className="text-sm">
        A worker at the cohort average on every measure would need about <strong>{baselineHours.toFixed(1)} h</strong>.
        This worker's baseline moves that to <strong>{medianHours.toFixed(1)} h</strong>:
      </p>
      <ul className="grid gap-1 text-sm">
        {sorted.map((c) => (
          <li key={c.measureCode} className="flex flex-wrap items-baseline gap-2">
            <span
              aria-hidden="true"
              className={`inline-block h-2 rounded ${c.multiplier < 1 ? "bg-spruce-600" : "bg-amber-caution"}`}
              style={{ width: `${Math.min(80, Math.max(4, Math.abs(c.logContribution) * 200))}px` }}
            />
            <span>
              {c.sentence} <span className="text-ink-soft">(baseline z = {c.zScore.toFixed(2)})</span>
            </span>
          </li>
        ))}
      </ul>
      <p className="text-xs text-ink-soft">
        Multiplying {baselineHours.toFixed(1)} h by every factor gives the median {medianHours.toFixed(1)} h.
      </p>
    </div>
  );
}
