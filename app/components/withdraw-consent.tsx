import type { ConsentPurpose } from "~/domain/consent-purposes";
import { PURPOSE_LABELS, withdrawalEffects } from "~/schemas/consent";
import type { ActionResult } from "~/schemas/form";
import { ActionForm, CheckboxField } from "./fields";

/**
 * The one confirmation pattern for withdrawing consent, on the worker's own page and on staff pages: closed
 * until asked for, then what happens at once, what is kept, what cannot be undone, and a box to tick (never
 * pre-ticked) before the button does anything.
 */
export function WithdrawConsent({
  purpose,
  reader,
  result,
  busy,
}: {
  purpose: ConsentPurpose;
  reader: "worker" | "staff";
  result?: ActionResult<unknown> | null;
  busy: boolean;
}) {
  const fx = withdrawalEffects(purpose, reader);
  const mine =
    result?.intent === "withdraw" && (result.result.initialValue as { purpose?: string })?.purpose === purpose;
  return (
    <details
      className="rounded-md border border-alert/30 p-3"
      open={mine && result?.result.status === "error"}
      data-testid={`withdraw-${purpose}`}
    >
      <summary className="cursor-pointer font-medium text-alert">Withdraw {purpose} consent…</summary>
      <ActionForm
        intent="withdraw"
        match={{ purpose }}
        result={result}
        className="mt-3 grid gap-3"
        aria-label={`Withdraw ${purpose} consent`}
      >
        <input type="hidden" name="purpose" value={purpose} />
        <p className="text-sm text-ink-soft">{PURPOSE_LABELS[purpose]}</p>
        <ul className="list-disc pl-5 text-sm">
          <li>{fx.now}</li>
          <li>{fx.kept}</li>
          <li>{fx.undo}</li>
        </ul>
        <CheckboxField name="confirmWithdraw" label={fx.confirm} />
        <div>
          <button type="submit" className="btn-danger min-h-11" disabled={busy}>
            Withdraw {purpose} consent
          </button>
        </div>
      </ActionForm>
    </details>
  );
}
