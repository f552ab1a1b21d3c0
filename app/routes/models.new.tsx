import { redirect, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ModelDiagnostics } from "~/components/calibration-chart";
import { ActionForm, CheckboxGroup, SelectField, TextArea, TextField } from "~/components/fields";
import { formAction } from "~/forms.server";
import { fitWorkbench, listModelMeasures, listModelVersions, saveModelVersion } from "~/models/model-versions.server";
import { listDeviceTypes } from "~/models/proficiency.server";
import { workbenchIntentSchema } from "~/schemas/forecast";
import type { Route } from "./+types/models.new";

export const meta: Route.MetaFunction = () => [{ title: "Model workbench · Limberly" }];

// Assessor workbench: choose a device type and measures, fit on consented past trainees who reached the
// criterion, read the diagnostics, save as a draft version (a second assessor approves it).
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "models.manage");
  const [devices, measures, versions] = await Promise.all([
    listDeviceTypes(),
    listModelMeasures(),
    listModelVersions(),
  ]);
  // Start from the measures of the versions in use (the product's default set), not every measure there is.
  const inUse = new Set(versions.filter((v) => v.status === "approved").flatMap((v) => v.measureIds));
  return { devices, measures, defaultMeasureIds: measures.filter((m) => inUse.has(m.id)).map((m) => m.id) };
}

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "models.manage");
  return formAction(await request.formData(), workbenchIntentSchema, async (v) => {
    if (v.intent === "save") {
      const saved = await saveModelVersion(v, p.user.id);
      throw redirect(`/models/${saved.id}?saved=1`);
    }
    return { notice: null, payload: await fitWorkbench(v) };
  });
}

export default function Workbench({ loaderData }: Route.ComponentProps) {
  const { devices, measures, defaultMeasureIds } = loaderData;
  const result = useActionData<typeof action>();
  const nav = useNavigation();
  const busy = nav.state === "submitting";
  // The choices as sent, so a page rendered after an error (or without JavaScript) keeps them.
  const sent = result?.result.initialValue as
    | { deviceTypeId?: string; measureIds?: string | string[]; ridge?: string; notes?: string }
    | undefined;
  const fit = result?.payload;
  const chosen = sent ? ([] as string[]).concat(sent.measureIds ?? []) : defaultMeasureIds.map(String);
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">Model workbench</h1>
        <p className="text-ink-soft">
          Fits log(hours to proficiency) on baseline measures of past trainees. Records of workers still training are
          censored and never used as outcomes; they are counted below with every other exclusion.
        </p>
      </div>
      <ActionForm result={result} className="card grid gap-4">
        <SelectField
          name="deviceTypeId"
          label="Device type"
          required
          defaultValue={sent?.deviceTypeId ?? (devices[0] ? String(devices[0].id) : undefined)}
          options={devices.map((d) => ({ value: String(d.id), label: d.name }))}
        />
        <CheckboxGroup
          name="measureIds"
          legend="Baseline measures"
          defaultValues={chosen}
          options={measures.map((m) => ({
            value: String(m.id),
            label: (
              <>
                {m.label} <span className="text-xs text-ink-soft">({m.unit})</span>
              </>
            ),
          }))}
        >
          {measures.length === 0 && <p className="text-sm text-ink-soft">No measures are configured yet.</p>}
        </CheckboxGroup>
        <div className="grid gap-4 sm:grid-cols-2">
          <TextField
            name="ridge"
            label="Ridge penalty (0 = ordinary least squares)"
            defaultValue={sent?.ridge ?? "0"}
            hint="A small penalty (e.g. 1–5) steadies small cohorts; intervals are then slightly optimistic."
          />
          <TextArea name="notes" label="Notes for the reviewer" rows={2} defaultValue={sent?.notes ?? ""} />
        </div>
        <div className="flex flex-wrap gap-3">
          <button type="submit" className="btn-primary" name="intent" value="fit" disabled={busy}>
            {busy && nav.formData?.get("intent") === "fit" ? "Fitting…" : "Fit model"}
          </button>
          {fit && (
            <button type="submit" className="btn-quiet" name="intent" value="save" disabled={busy}>
              Save as draft version
            </button>
          )}
        </div>
        {fit && (
          <p className="text-sm text-ink-soft">
            Saving refits on the server with the same choices and stores the version as a draft; another assessor must
            approve it before it is used.
          </p>
        )}
      </ActionForm>
      {fit && <ModelDiagnostics fit={fit} />}
    </div>
  );
}
