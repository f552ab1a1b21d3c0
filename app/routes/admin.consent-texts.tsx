import { useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionForm, ActionNotice, SelectField, TextArea, TextField } from "~/components/fields";
import { formAction } from "~/forms.server";
import { createConsentText, listConsentTexts } from "~/models/consent-texts.server";
import { consentTextSchema } from "~/schemas/admin";
import type { Route } from "./+types/admin.consent-texts";

export const meta: Route.MetaFunction = () => [{ title: "Consent texts · Limberly" }];

const PURPOSE_LABEL: Record<string, string> = {
  assessment: "Assessment — baseline may be recorded",
  planning: "Planning — forecast may be used to allocate training",
  model: "Model — de-identified record may join a model cohort",
};

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "admin.consenttexts");
  return { texts: await listConsentTexts() };
}

export async function action({ request }: Route.ActionArgs) {
  const me = await requireUser(request, "admin.consenttexts");
  return formAction(await request.formData(), consentTextSchema, async (v) => {
    await createConsentText({ ...v, createdBy: me.user.id });
    return `Version ${v.version} of the ${v.purpose} text saved. Workers will be asked to renew consent from ${v.effectiveFrom}.`;
  });
}

export default function AdminConsentTexts({ loaderData }: Route.ComponentProps) {
  const r = useActionData<typeof action>();
  return (
    <div className="grid gap-6">
      <h1 className="page-title">Consent texts</h1>
      <p className="text-ink-soft">
        Each purpose is consented to separately. Texts are versioned, never edited: a new version asks every worker to
        renew consent.
      </p>
      <ActionNotice result={r} />
      <div className="grid gap-3">
        {loaderData.texts.map((t) => (
          <article key={t.id} className="card">
            <h2 className="font-semibold">
              {PURPOSE_LABEL[t.purpose]} · v{t.version}
            </h2>
            <p className="text-sm text-ink-soft">
              In force from {t.effective_from}
              {t.created_by ? ` · added by ${t.created_by}` : ""}
            </p>
            <p className="mt-2 whitespace-pre-line">{t.body}</p>
          </article>
        ))}
      </div>
      <section className="card" aria-labelledby="new-text">
        <h2 id="new-text" className="text-lg font-semibold">
          Add a version
        </h2>
        <ActionForm result={r} className="mt-3 grid gap-4 sm:grid-cols-3">
          <SelectField
            name="purpose"
            label="Purpose"
            required
            options={Object.entries(PURPOSE_LABEL).map(([value, label]) => ({ value, label }))}
          />
          <TextField name="version" label="Version" required hint="e.g. 1.1" />
          <TextField name="effectiveFrom" label="In force from" type="date" required />
          <div className="sm:col-span-3">
            <TextArea name="body" label="Text shown to the worker" required rows={6} />
          </div>
          <div className="sm:col-span-3">
            <button type="submit" className="btn-primary">
              Save version
            </button>
          </div>
        </ActionForm>
      </section>
    </div>
  );
}
