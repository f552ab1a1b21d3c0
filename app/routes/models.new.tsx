import { redirect, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ModelDiagnostics } from "~/components/calibration-chart";
import { ActionForm, CheckboxGroup, SelectField, TextArea } from "~/components/fields";
import { formAction } from "~/forms.server";
import { planningQuantile } from "~/models/forecast.server";
import {
  courseCountsByDevice,
  fitWorkbench,
  listModelMeasures,
  listModelVersions,
  saveModelVersion,
} from "~/models/model-versions.server";
import { normSetCoverage } from "~/models/norms.server";
import { listDeviceTypes } from "~/models/proficiency.server";
import { percentileLabel, workbenchIntentSchema } from "~/schemas/forecast";
import type { Route } from "./+types/models.new";

export const meta: Route.MetaFunction = () => [{ title: "Model workbench · Limberly" }];

// Assessor workbench: choose a device type, measures and norm set, fit on consented past trainees (those
// still in training or stopped count for the hours they reached), read the checks, save as a draft version
// (a second assessor approves it).
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "models.manage");
  const [devices, measures, versions, counts, normSets, quantile] = await Promise.all([
    listDeviceTypes(),
    listModelMeasures(),
    listModelVersions(),
    courseCountsByDevice(),
    normSetCoverage(),
    planningQuantile(),
  ]);
  // Start from the measures of the versions in use (the product's default set), not every measure there is.
  const inUse = new Set(versions.filter((v) => v.status === "approved").flatMap((v) => v.measureIds));
  return {
    devices,
    measures,
    counts,
    quantile,
    normSets: normSets.map((n) => ({ id: n.id, name: n.name })),
    defaultMeasureIds: measures.filter((m) => inUse.has(m.id)).map((m) => m.id),
  };
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
  const { devices, measures, defaultMeasureIds, counts, normSets, quantile } = loaderData;
  const result = useActionData<typeof action>();
  const nav = useNavigation();
  const busy = nav.state === "submitting";
  // The choices as sent, so a page rendered after an error (or without JavaScript) keeps them.
  const sent = result?.result.initialValue as
    | { deviceTypeId?: string; measureIds?: string | string[]; normSetId?: string; notes?: string }
    | undefined;
  const fit = result?.payload;
  const chosen = sent ? ([] as string[]).concat(sent.measureIds ?? []) : defaultMeasureIds.map(String);
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">Model workbench</h1>
        <p className="text-ink-soft">
          Forecasts hours to proficiency from the baseline measures of past trainees. Trainees still in training when
          the data was taken, and those who stopped, count for the hours they reached: leaving them out would drop the
          slowest learners and make every planning figure too short. Plans use the {percentileLabel(quantile)} of each
          forecast (set on the models page).
        </p>
      </div>
      <section className="card overflow-x-auto" aria-labelledby="counts-h">
        <h2 id="counts-h" className="text-lg font-semibold">
          Past trainees with model-use consent
        </h2>
        <table className="table-base mt-2" data-testid="course-counts">
          <caption className="sr-only">Completed and censored courses per device type</caption>
          <thead>
            <tr>
              <th scope="col">Device type</th>
              <th scope="col">Reached the criterion</th>
              <th scope="col">Still in training when the data was taken</th>
              <th scope="col">Stopped</th>
            </tr>
          </thead>
          <tbody>
            {counts.map((c) => (
              <tr key={c.deviceTypeId} data-device={c.name}>
                <th scope="row" className="font-normal">
                  {c.name}
                </th>
                <td data-count="completed">{c.completed}</td>
                <td data-count="still-training">{c.stillTraining}</td>
                <td data-count="stopped">{c.stopped}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
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
          <SelectField
            name="normSetId"
            label="Norm set for the z-scores"
            defaultValue={sent?.normSetId ?? ""}
            options={[
              { value: "", label: "Newest set with every chosen measure" },
              ...normSets.map((n) => ({ value: String(n.id), label: n.name })),
            ]}
            hint="The version keeps this set: a newer norm set never changes its forecasts."
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
