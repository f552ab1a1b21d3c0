import { data, Form, useActionData, useNavigation } from "react-router";
import { FormError, Notice } from "~/components/fields";
import { formatInstantDay } from "~/dates";
import { CONSENT_PURPOSES, type ConsentPurpose } from "~/domain/consent-purposes";
import { UserError as ConsentInputError } from "~/errors";
import { giveOwnConsent, myConsent, withdrawOwnConsent } from "~/models/self-service.server";
import { workerTimeZone } from "~/models/sites.server";
import { PURPOSE_LABELS } from "~/schemas/consent";
import { formToObject, parseWith } from "~/schemas/form";
import { giveOwnConsentSchema, withdrawOwnConsentSchema } from "~/schemas/portal";
import type { Route } from "./+types/me.consent";
import { requireOwnWorker } from "./me.guard.server";

export const meta: Route.MetaFunction = () => [{ title: "My consent · Limberly" }];

const WHAT_GOES: Record<ConsentPurpose, string> = {
  assessment:
    "Your baseline assessments, uploaded traces and forecasts are erased at once, and you leave every training plan.",
  planning:
    "Your forecasts are erased at once, your future sessions are cancelled and you leave every training plan. Your coordinator is told.",
  model: "Your de-identified record no longer joins new forecast models.",
};

export async function loader({ request }: Route.LoaderArgs) {
  const { workerId } = await requireOwnWorker(request, "self.read");
  return { ...(await myConsent(workerId)), timeZone: await workerTimeZone(workerId) };
}

export async function action({ request }: Route.ActionArgs) {
  const { p, workerId } = await requireOwnWorker(request, "self.consent");
  const form = formToObject(await request.formData());
  const intent = form.intent === "withdraw" ? "withdraw" : "give";
  const parsed =
    intent === "withdraw" ? parseWith(withdrawOwnConsentSchema, form) : parseWith(giveOwnConsentSchema, form);
  const purpose = typeof form.purpose === "string" ? form.purpose : "";
  if (!parsed.ok) return data({ purpose, errors: parsed.errors, done: null }, { status: 400 });
  try {
    if (parsed.data.intent === "give") {
      await giveOwnConsent(workerId, parsed.data.purpose, p.user.id);
      return { purpose, errors: null, done: `Thank you: ${parsed.data.purpose} consent is recorded.` };
    }
    const r = await withdrawOwnConsent(workerId, parsed.data.purpose, p.user.id);
    const erased = Object.entries(r.erased)
      .filter(([, n]) => n > 0)
      .map(([k, n]) => `${n} ${k}`)
      .join(", ");
    return {
      purpose,
      errors: null,
      done: `Your ${parsed.data.purpose} consent is withdrawn.${erased ? ` Erased: ${erased}.` : ""}${r.sessionsCancelled ? ` ${r.sessionsCancelled} future session${r.sessionsCancelled === 1 ? "" : "s"} cancelled.` : ""}${r.coordinatorsNotified.length ? " Your training coordinator has been told." : ""}`,
    };
  } catch (e) {
    if (e instanceof ConsentInputError)
      return data({ purpose, errors: { _form: e.message }, done: null }, { status: 409 });
    throw e;
  }
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
      {result?.done && <Notice>{result.done}</Notice>}
      {CONSENT_PURPOSES.map((purpose) => {
        const s = state[purpose];
        const text = texts[purpose];
        const errors = (result?.purpose === purpose ? (result?.errors ?? {}) : {}) as Record<string, string>;
        const given = s.status === "given";
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
            {text ? (
              <details open={!given}>
                <summary className="cursor-pointer text-spruce-700">
                  Current text (v{text.version}, in force since {text.effectiveFrom})
                </summary>
                <p className="mt-2 whitespace-pre-line rounded-md bg-paper p-3">{text.body}</p>
              </details>
            ) : (
              <p className="text-ink-soft">No text is in force for this purpose yet.</p>
            )}
            {s.needsRenewal && (
              <p className="text-amber-caution">
                The text has changed since you agreed (you agreed to v{s.version}). Read the new text and agree again if
                you are happy with it.
              </p>
            )}
            <FormError message={errors._form} />
            {(!given || s.needsRenewal) && text && (
              <Form method="post" className="grid gap-3">
                <input type="hidden" name="purpose" value={purpose} />
                <label className="flex min-h-11 items-start gap-3">
                  <input
                    type="checkbox"
                    name="confirmRead"
                    className="mt-1 size-5"
                    aria-describedby={errors.confirmRead ? `${purpose}-read-error` : undefined}
                  />
                  <span>I have read the current text (v{text.version}) and I agree.</span>
                </label>
                {errors.confirmRead && (
                  <p id={`${purpose}-read-error`} className="field-error">
                    {errors.confirmRead}
                  </p>
                )}
                <div>
                  <button type="submit" className="btn-primary min-h-11" name="intent" value="give" disabled={busy}>
                    Give {purpose} consent
                  </button>
                </div>
              </Form>
            )}
            {given && (
              <Form method="post" className="grid gap-3 border-t border-line pt-3">
                <input type="hidden" name="purpose" value={purpose} />
                <p className="text-sm">If you withdraw: {WHAT_GOES[purpose]}</p>
                <label className="flex min-h-11 items-start gap-3">
                  <input
                    type="checkbox"
                    name="confirmErase"
                    className="mt-1 size-5"
                    aria-describedby={errors.confirmErase ? `${purpose}-erase-error` : undefined}
                  />
                  <span>I understand this happens at once and cannot be undone.</span>
                </label>
                {errors.confirmErase && (
                  <p id={`${purpose}-erase-error`} className="field-error">
                    {errors.confirmErase}
                  </p>
                )}
                <div>
                  <button
                    type="submit"
                    className="btn-quiet min-h-11 border-alert text-alert"
                    name="intent"
                    value="withdraw"
                    disabled={busy}
                  >
                    Withdraw {purpose} consent
                  </button>
                </div>
              </Form>
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
