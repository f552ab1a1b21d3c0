import { useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionForm, ActionNotice, FormError, TextField, useFieldWiring } from "~/components/fields";
import { formAction } from "~/forms.server";
import { organisationSettings, updateOrganisationSettings } from "~/models/readiness.server";
import {
  GROUPING_LABELS,
  GROUPINGS,
  HIDDEN_SHARE_PERCENT,
  MAX_THRESHOLD,
  organisationSettingsSchema,
} from "~/schemas/readiness";
import type { Route } from "./+types/admin.organisation";

export const meta: Route.MetaFunction = () => [{ title: "Organisation settings · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "admin.settings");
  const s = await organisationSettings();
  return {
    name: s.name,
    threshold: s.threshold,
    groupings: s.groupings,
    maxHiddenSharePercent: Math.round(s.maxHiddenShare * 100),
  };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, "admin.settings");
  return formAction(await request.formData(), organisationSettingsSchema, async (v) => {
    await updateOrganisationSettings(v);
    return "Settings saved. Managers' pages, exports and the API use them from now on.";
  });
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
  return (
    <div className="grid max-w-3xl gap-6">
      <div>
        <h1 className="page-title">Organisation settings</h1>
        <p className="text-ink-soft">
          {loaderData.name}: what managers may see of readiness. Managers only ever see counts and medians for these
          fixed groupings, never filters or individual records.
        </p>
      </div>
      <ActionNotice result={r} />
      <FormError message={r?.result.status === "error" ? "Please correct the fields marked below." : undefined} />
      <ActionForm result={r} className="card grid gap-5">
        <TextField
          name="disclosureThreshold"
          label="Smallest group size shown to managers"
          type="number"
          required
          defaultValue={String(loaderData.threshold)}
          hint={`At least 5, at most ${MAX_THRESHOLD}. Counts of 1 to this number minus 1 are hidden, together with any number that would give them away; medians and shares need a group at least this large.`}
        />
        <TextField
          name="maxHiddenSharePercent"
          label="Most of a table that may be hidden before the board groups more coarsely (%)"
          type="number"
          required
          defaultValue={String(loaderData.maxHiddenSharePercent)}
          hint={`${HIDDEN_SHARE_PERCENT.min} to ${HIDDEN_SHARE_PERCENT.max} %. Where protection would hide more of a table, the board shows a coarser grouping (e.g. stage bands) and says so.`}
        />
        <Groupings chosen={loaderData.groupings} />
        <button type="submit" className="btn-primary justify-self-start" disabled={nav.state === "submitting"}>
          Save settings
        </button>
      </ActionForm>
    </div>
  );
}

/** The groupings as checkboxes, each with its own hint; one error for the set. */
function Groupings({ chosen }: { chosen: readonly string[] }) {
  const hint = "At least one of site or department, and at least one of the others.";
  const f = useFieldWiring("groupings", undefined, hint);
  return (
    <fieldset aria-describedby={f.aria["aria-describedby"]}>
      <legend className="field-label">Groupings managers see</legend>
      <p id={`${f.id}-hint`} className="mt-1 text-sm text-ink-soft">
        {hint}
      </p>
      <div className="mt-2 grid gap-2">
        {GROUPINGS.map((g) => (
          <div key={g} className="flex items-start gap-3">
            <input
              id={`${f.id}-${g}`}
              type="checkbox"
              name="groupings"
              value={g}
              defaultChecked={chosen.includes(g)}
              className="mt-1 h-5 w-5 accent-spruce-700"
              aria-invalid={f.aria["aria-invalid"]}
              aria-describedby={`${f.id}-${g}-hint`}
            />
            <div>
              <label htmlFor={`${f.id}-${g}`} className="font-medium">
                {GROUPING_LABELS[g]}
              </label>
              <p id={`${f.id}-${g}-hint`} className="text-sm text-ink-soft">
                {HINTS[g]}
              </p>
            </div>
          </div>
        ))}
      </div>
      {f.message && (
        <p id={`${f.id}-error`} className="field-error">
          {f.message}
        </p>
      )}
    </fieldset>
  );
}
