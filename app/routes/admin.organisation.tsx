import { data, Form, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { FormError, Notice, TextField } from "~/components/fields";
import { organisationSettings, updateOrganisationSettings } from "~/models/readiness.server";
import { formToObject, parseWith } from "~/schemas/form";
import { GROUPING_LABELS, GROUPINGS, MAX_THRESHOLD, organisationSettingsSchema } from "~/schemas/readiness";
import type { Route } from "./+types/admin.organisation";

export const meta: Route.MetaFunction = () => [{ title: "Organisation settings · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "admin.settings");
  const s = await organisationSettings();
  return { name: s.name, threshold: s.threshold, groupings: s.groupings };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, "admin.settings");
  const form = formToObject(await request.formData());
  const p = parseWith(organisationSettingsSchema, form);
  if (!p.ok) return data({ errors: p.errors, done: null }, { status: 400 });
  await updateOrganisationSettings(p.data);
  return { errors: null, done: "Settings saved. Managers' pages, exports and the API use them from now on." };
}

const HINTS: Record<(typeof GROUPINGS)[number], string> = {
  site: "Whole-site rows, for managers responsible for a site (and API keys, which are scoped to sites).",
  department: "One row per department the manager is responsible for.",
  deviceType: "Ready per device type and median forecast hours per device type.",
  stage: "People per readiness stage.",
  week: "Planned ready by week, from published training plans.",
};

export default function OrganisationSettingsPage({ loaderData }: Route.ComponentProps) {
  const r = useActionData<typeof action>();
  const nav = useNavigation();
  const errors = (r?.errors ?? {}) as Record<string, string>;
  return (
    <div className="grid max-w-3xl gap-6">
      <div>
        <h1 className="page-title">Organisation settings</h1>
        <p className="text-ink-soft">
          {loaderData.name}: what managers may see of readiness. Managers only ever see counts and medians for these
          fixed groupings, never filters or individual records.
        </p>
      </div>
      {r?.done && <Notice>{r.done}</Notice>}
      <FormError message={r?.errors ? "Please correct the fields marked below." : undefined} />
      <Form method="post" className="card grid gap-5" noValidate>
        <TextField
          name="disclosureThreshold"
          label="Smallest group size shown to managers"
          type="number"
          required
          defaultValue={String(loaderData.threshold)}
          error={errors.disclosureThreshold}
          hint={`At least 5, at most ${MAX_THRESHOLD}. Counts of 1 to this number minus 1 are hidden, together with any number that would give them away; medians and shares need a group at least this large.`}
        />
        <fieldset aria-describedby={errors.groupings ? "groupings-error" : "groupings-hint"}>
          <legend className="field-label">Groupings managers see</legend>
          <p id="groupings-hint" className="mt-1 text-sm text-ink-soft">
            At least one of site or department, and at least one of the others.
          </p>
          <div className="mt-2 grid gap-2">
            {GROUPINGS.map((g) => (
              <div key={g} className="flex items-start gap-3">
                <input
                  id={`grouping-${g}`}
                  type="checkbox"
                  name="groupings"
                  value={g}
                  defaultChecked={loaderData.groupings.includes(g)}
                  className="mt-1 h-5 w-5 accent-spruce-700"
                  aria-describedby={`grouping-${g}-hint`}
                />
                <div>
                  <label htmlFor={`grouping-${g}`} className="font-medium">
                    {GROUPING_LABELS[g]}
                  </label>
                  <p id={`grouping-${g}-hint`} className="text-sm text-ink-soft">
                    {HINTS[g]}
                  </p>
                </div>
              </div>
            ))}
          </div>
          {errors.groupings && (
            <p id="groupings-error" className="field-error">
              {errors.groupings}
            </p>
          )}
        </fieldset>
        <button type="submit" className="btn-primary justify-self-start" disabled={nav.state === "submitting"}>
          Save settings
        </button>
      </Form>
    </div>
  );
}
