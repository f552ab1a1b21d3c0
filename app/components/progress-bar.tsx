// A labelled progress bar (role="progressbar") for background work such as an allocation solve.
export function ProgressBar({ label, fraction, phase }: { label: string; fraction: number; phase?: string | null }) {
  const pct = Math.round(Math.max(0, Math.min(1, fraction)) * 100);
  return (
    <div className="grid gap-1">
      <div className="flex flex-wrap justify-between gap-2 text-sm">
        <span id="progress-label" className="font-medium">
          {label}
        </span>
        <span aria-hidden="true">
          {pct} %{phase ? ` · ${phase}` : ""}
        </span>
      </div>
      <div
        role="progressbar"
        aria-labelledby="progress-label"
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={pct}
        aria-valuetext={`${pct} percent${phase ? `, ${phase}` : ""}`}
        className="h-3 w-full overflow-hidden rounded-full bg-spruce-50 ring-1 ring-line"
        data-testid="run-progress"
      >
        <div className="h-full bg-spruce-600 transition-[width] duration-300" style={{ width: `${pct}%` }} />
      </div>
    </div>
  );
}
