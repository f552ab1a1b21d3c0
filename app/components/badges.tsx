import { CONSENT_PURPOSES, type ConsentPurpose } from "~/domain/consent-purposes";
import { STAGE_LABELS, type Stage } from "~/domain/stages";

// Stage and consent badges for lists and records. Text carries the meaning; colour only helps.
const STAGE_TONE: Partial<Record<Stage, string>> = {
  invited: "bg-paper text-ink-soft border-line",
  consented: "bg-spruce-50 text-spruce-800 border-spruce-100",
  baselined: "bg-spruce-100 text-spruce-800 border-spruce-100",
  withdrawn: "bg-alert-wash text-alert border-alert/30",
  paused: "bg-amber-wash text-amber-caution border-amber-caution/30",
};

export function StageBadge({ stage }: { stage: string }) {
  const tone = STAGE_TONE[stage as Stage] ?? "bg-spruce-50 text-spruce-800 border-spruce-100";
  return (
    <span className={`inline-block whitespace-nowrap rounded-full border px-2 py-0.5 text-xs font-medium ${tone}`}>
      {STAGE_LABELS[stage as Stage] ?? stage}
    </span>
  );
}

export interface PurposeBadgeState {
  status: "given" | "withdrawn" | "none";
  needsRenewal: boolean;
  version: string | null;
  currentVersion: string | null;
}
const PURPOSE_SHORT = { assessment: "Assess.", planning: "Plan.", model: "Model" } as const;
const PURPOSE_FULL = { assessment: "Assessment", planning: "Planning", model: "Model" } as const;

export function consentText(s: PurposeBadgeState): string {
  if (s.status === "given")
    return s.needsRenewal ? `given (v${s.version}), renewal due for v${s.currentVersion}` : `given (v${s.version})`;
  if (s.status === "withdrawn") return "withdrawn";
  return "not given";
}

export function ConsentBadges({ consent }: { consent: Record<ConsentPurpose, PurposeBadgeState> | null }) {
  if (!consent) return null;
  return (
    <span className="flex flex-wrap gap-1">
      {CONSENT_PURPOSES.map((p) => {
        const s = consent[p];
        const mark = s.status === "given" ? (s.needsRenewal ? "↻" : "✓") : s.status === "withdrawn" ? "✕" : "–";
        const tone =
          s.status === "given"
            ? s.needsRenewal
              ? "bg-amber-wash text-amber-caution border-amber-caution/30"
              : "bg-spruce-50 text-spruce-800 border-spruce-100"
            : s.status === "withdrawn"
              ? "bg-alert-wash text-alert border-alert/30"
              : "bg-paper text-ink-soft border-line";
        return (
          <span
            key={p}
            className={`inline-block whitespace-nowrap rounded-full border px-2 py-0.5 text-xs ${tone}`}
            title={`${PURPOSE_FULL[p]} consent: ${consentText(s)}`}
          >
            <span aria-hidden="true">
              {PURPOSE_SHORT[p]} {mark}
            </span>
            <span className="sr-only">
              {PURPOSE_FULL[p]} consent: {consentText(s)}
            </span>
          </span>
        );
      })}
    </span>
  );
}
