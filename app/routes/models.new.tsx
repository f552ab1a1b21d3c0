import { data, Form, redirect, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ModelDiagnostics } from "~/components/calibration-chart";
import { FormError, TextArea, TextField } from "~/components/fields";
import {
  FitError,
  fitWorkbench,
  listModelMeasures,
  listModelVersions,
  saveModelVersion,
  type WorkbenchFit,
} from "~/models/model-versions.server";
import { listDeviceTypes } from "~/models/proficiency.server";
import { workbenchFormSchema } from "~/schemas/forecast";
import { formToObject, parseWith } from "~/schemas/form";
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

type ActionResult = {
  errors: Record<string, string> | null;
  fit: WorkbenchFit | null;
  input: { deviceTypeId: number; measureIds: number[]; ridge: number; notes?: string } | null;
};

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "models.manage");
  const form = formToObject(await request.formData());
  const parsed = parseWith(workbenchFormSchema, form);
  if (!parsed.ok) return data<ActionResult>({ errors: parsed.errors, fit: null, input: null }, { status: 400 });
  try {
    if (form.intent === "save") {
      const v = await saveModelVersion(parsed.data, p.user.id);
      return redirect(`/models/${v.id}?saved=1`);
    }
    const fit = await fitWorkbench(parsed.data);
    return data<ActionResult>({ errors: null, fit, input: parsed.data });
  } catch (e) {
    if (e instanceof FitError)
      return data<ActionResult>({ errors: { _form: e.message }, fit: null, input: parsed.data }, { status: 422 });
    throw e;
  }
}

export default function Workbench({ loaderData }: Route.ComponentProps) {
  const { devices, measures, defaultMeasureIds } = loaderData;
  const result = useActionData<typeof action>() as ActionResult | undefined;
  const nav = useNavigation();
  const busy = nav.state === "submitting";
  const errors = result?.errors ?? {};
  const input = result?.input;
  const chosen = new Set(input?.measureIds ?? defaultMeasureIds);
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">Model workbench</h1>
        <p className="text-ink-soft">
          Fits log(hours to proficiency) on baseline measures of past trainees. Records of workers still training are
          censored and never used as outcomes; they are counted below with every other exclusion.
        </p>
      </div>
      <Form method="post" className="card grid gap-4" noValidate>
        <FormError message={errors._form} />
        <div>
          <label htmlFor="deviceTypeId" className="field-label">
            Device type<span aria-hidden="true"> *</span>
          </label>
          <select
            id="deviceTypeId"
            name="deviceTypeId"
            className="field-input"
            defaultValue={input?.deviceTypeId ?? devices[0]?.id}
            aria-invalid={errors.deviceTypeId ? true : undefined}
            aria-describedby={errors.deviceTypeId ? "deviceTypeId-error" : undefined}
          >
            {devices.map((d) => (
              <option key={d.id} value={d.id}>
                {d.name}
              </option>
            ))}
          </select>
          {errors.deviceTypeId && (
            <p id="deviceTypeId-error" className="field-error">
              {errors.deviceTypeId}
            </p>
          )}
        </div>
        <fieldset aria-describedby={errors.measureIds ? "measureIds-error" : undefined}>
          <legend className="field-label">Baseline measures</legend>
          {measures.length === 0 && <p className="text-sm text-ink-soft">No measures are configured yet.</p>}
          <div className="mt-1 grid gap-1 sm:grid-cols-2">
            {measures.map((m) => (
              <label key={m.id} className="flex min-h-11 items-center gap-2 rounded-md border border-line px-3">
                <input
                  type="checkbox"
                  name="measureIds"
                  value={m.id}
                  defaultChecked={chosen.has(m.id)}
                  className="h-5 w-5"
                />
                <span>
                  {m.label} <span className="text-xs text-ink-soft">({m.unit})</span>
                </span>
              </label>
            ))}
          </div>
          {errors.measureIds && (
            <p id="measureIds-error" className="field-error">
              {errors.measureIds}
            </p>
          )}
        </fieldset>
        <div className="grid gap-4 sm:grid-cols-2">
          <TextField
            name="ridge"
            label="Ridge penalty (0 = ordinary least squares)"
            defaultValue={String(input?.ridge ?? 0)}
            error={errors.ridge}
            hint="A small penalty (e.g. 1–5) steadies small cohorts; intervals are then slightly optimistic."
          />
          <TextArea
            name="notes"
            label="Notes for the reviewer"
            rows={2}
            defaultValue={input?.notes ?? ""}
            error={errors.notes}
          />
        </div>
        <div className="flex flex-wrap gap-3">
          <button type="submit" className="btn-primary" name="intent" value="fit" disabled={busy}>
            {busy && nav.formData?.get("intent") === "fit" ? "Fitting…" : "Fit model"}
          </button>
          {result?.fit && (
            <button type="submit" className="btn-quiet" name="intent" value="save" disabled={busy}>
              Save as draft version
            </button>
          )}
        </div>
        {result?.fit && (
          <p className="text-sm text-ink-soft">
            Saving refits on the server with the same choices and stores the version as a draft; another assessor must
            approve it before it is used.
          </p>
        )}
      </Form>
      {result?.fit && <ModelDiagnostics fit={result.fit} />}
    </div>
  );
}
