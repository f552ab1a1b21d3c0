// The usual cautions shown wherever devices are planned or worn (docs/consent-and-disclosure.md). They defer to the
// manufacturer, local occupational-safety rules and licensed practice. The stop-and-report line is addressed
// to the reader: a worker reports to their trainer, a trainer to the assessors, everyone else makes sure it is.
type Reader = "worker" | "trainer" | "staff";
const REPORT_TO: Record<Reader, string> = {
  worker: "Stop at once on pain, numbness, tingling or skin damage, and report it to your trainer.",
  trainer:
    "Stop the session at once on pain, numbness, tingling or skin damage, and log it as an adverse event: the assessors are told and review it.",
  staff:
    "Training stops at once on pain, numbness, tingling or skin damage; the trainer logs it as an adverse event and the assessors review it.",
};

export function DeviceCautions({ compact = false, reader = "staff" }: { compact?: boolean; reader?: Reader }) {
  return (
    <aside
      aria-label="Device safety cautions"
      className="rounded-lg border border-amber-caution/40 bg-amber-wash p-4 text-sm text-ink"
    >
      <p className="font-semibold text-amber-caution">Safety cautions for wearable devices</p>
      <ul className={`mt-2 list-disc pl-5 ${compact ? "" : "grid gap-1"}`}>
        <li>Keep to the device's wear-time limit and take the planned breaks.</li>
        <li>Check skin under straps and contact points before and after each session; watch for fatigue.</li>
        <li>{REPORT_TO[reader]}</li>
        <li>Fit is checked by a clinician before first use and after any change of size or settings.</li>
        <li>
          The manufacturer's instructions, local occupational-safety rules and licensed clinical practice take
          precedence over anything shown here (for personal care robots, e.g. ISO 13482).
        </li>
      </ul>
    </aside>
  );
}
