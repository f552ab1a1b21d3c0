import { useActionData, useNavigation } from "react-router";
import { ActionForm, ActionNotice, CheckboxField } from "~/components/fields";
import { WithdrawConsent } from "~/components/withdraw-consent";
import { formatInstantDay } from "~/dates";
import { CONSENT_PURPOSES } from "~/domain/consent-purposes";
import { formAction } from "~/forms.server";
import { giveOwnConsent, myConsent, withdrawOwnConsent } from "~/models/self-service.server";
import { workerTimeZone } from "~/models/sites.server";
import { PURPOSE_LABELS } from "~/schemas/consent";
import { intents } from "~/schemas/form";
import { giveOwnConsentSchema, withdrawOwnConsentSchema } from "~/schemas/portal";
import type { Route } from "./+types/me.consent";
import { requireOwnWorker } from "./me.guard.server";

export const meta: Route.MetaFunction = () => [{ title: "My consent · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const { workerId } = await requireOwnWorker(request, "self.read");
  return { ...(await myConsent(workerId)), timeZone: await workerTimeZone(workerId) };
}

const consentForms = intents(giveOwnConsentSchema, withdrawOwnConsentSchema);

export async function action({ request }: Route.ActionArgs) {
  const { p, workerId } = await requireOwnWorker(request, "self.consent");
  return formAction(await request.formData(), consentForms, async (v) => {
    if (v.intent === "give") {
      await giveOwnConsent(workerId, v.purpose, p.user.id);
      return `Thank you: ${v.purpose} consent is recorded.`;
    }
    const r = await withdrawOwnConsent(workerId, v.purpose, p.user.id);
    const erased = Object.entries(r.erased)
      .filter(([, n]) => n > 0)
      .map(([k, n]) => `${n} ${k}`)
      .join(", ");
    return `Your ${v.purpose} consent is withdrawn.${erased ? ` Erased: ${erased}.` : ""}${r.sessionsCancelled ? ` ${r.sessionsCancelled} future session${r.sessionsCancelled === 1 ? "" : "s"} cancelled.` : ""}${r.coordinatorsNotified.length ? " Your training coordinator has been told." : ""} You can give it again at any time.`;
  });
}

export default function MyConsent({ loaderData }: Route.ComponentProps) {
  const { texts, state, history, timeZone } = loaderData;
  const formatDay = (at: string) => formatInstantDay(at, timeZone);
  const result = useActionData<typeof action>();
  const nav = useNavigation();
  const busy = nav.state === "submitting";
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">My consent</h1>
        <p className="text-ink-soft">
          Each purpose is separate. You can give or withdraw each one at any time; withdrawing takes effect at once.
        </p>
      </div>
      <ActionNotice result={result} />
      {CONSENT_PURPOSES.map((purpose) => {
        const s = state[purpose];
        const text = texts[purpose];
        const given = s.status === "given";
        const asking = (!given || s.needsRenewal) && text;
        const textBlock = text ? (
          <details open={Boolean(asking)}>
            <summary className="cursor-pointer text-spruce-700">
              Current text (v{text.version}, in force since {text.effectiveFrom})
            </summary>
            <p className="mt-2 whitespace-pre-line rounded-md bg-paper p-3">{text.body}</p>
          </details>
        ) : (
          <p className="text-ink-soft">No text is in force for this purpose yet.</p>
        );
        return (
          <section
            key={purpose}
            className="card grid gap-3"
            aria-labelledby={`p-${purpose}`}
            data-testid={`consent-${purpose}`}
          >
            <div className="flex flex-wrap items-baseline justify-between gap-2">
              <h2 id={`p-${purpose}`} className="text-lg font-semibold">
                {PURPOSE_LABELS[purpose]}
              </h2>
              <p
                data-testid={`consent-status-${purpose}`}
                className={given ? "font-semibold text-spruce-700" : "text-ink-soft"}
              >
                {given
                  ? `Given${s.at ? ` ${formatDay(s.at)}` : ""} (text v${s.version})`
                  : s.status === "withdrawn"
                    ? `Withdrawn${s.at ? ` ${formatDay(s.at)}` : ""}`
                    : "Not given"}
              </p>
            </div>
            {s.needsRenewal && (
              <p className="text-amber-caution">
                The text has changed since you agreed (you agreed to v{s.version}). Read the new text and agree again if
                you are happy with it.
              </p>
            )}
            {asking ? (
              <>
                {textBlock}
                <ActionForm intent="give" match={{ purpose }} result={result} className="grid gap-3">
                  <input type="hidden" name="purpose" value={purpose} />
                  <CheckboxField
                    name="confirmRead"
                    label={`I have read the current text (v${text.version}) and I agree.`}
                  />
                  <div>
                    <button type="submit" className="btn-primary min-h-11" disabled={busy}>
                      Give {purpose} consent
                    </button>
                  </div>
                </ActionForm>
                {given && <WithdrawConsent purpose={purpose} reader="worker" result={result} busy={busy} />}
              </>
            ) : given ? (
              // Given and current: a summary, with the text and the withdrawal behind "Change".
              <details data-testid={`consent-change-${purpose}`}>
                <summary className="cursor-pointer text-spruce-700">Change</summary>
                <div className="mt-3 grid gap-3">
                  {textBlock}
                  <WithdrawConsent purpose={purpose} reader="worker" result={result} busy={busy} />
                </div>
              </details>
            ) : (
              textBlock
            )}
          </section>
        );
      })}
      <section className="card overflow-x-auto p-0" aria-labelledby="hist-h" tabIndex={0}>
        <h2 id="hist-h" className="px-4 pt-4 text-lg font-semibold">
          History
        </h2>
        <table className="table-base mt-2">
          <caption className="sr-only">My consent records</caption>
          <thead>
            <tr>
              <th scope="col">Purpose</th>
              <th scope="col">Status</th>
              <th scope="col">When</th>
              <th scope="col">Text</th>
              <th scope="col">Recorded by</th>
            </tr>
          </thead>
          <tbody>
            {history.length === 0 && (
              <tr>
                <td colSpan={5}>No consent recorded yet.</td>
              </tr>
            )}
            {history.map((h) => (
              <tr key={h.id}>
                <td>{h.purpose}</td>
                <td>{h.status}</td>
                <td>{h.at ? formatDay(h.at) : ""}</td>
                <td>v{h.version}</td>
                <td>
                  {h.recordedBy ?? ""}
                  {h.witness ? ` (witness ${h.witness})` : ""}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}
