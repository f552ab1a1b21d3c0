import { invariantResponse } from "@epic-web/invariant";
import { useActionData, useNavigation, useSearchParams } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ModelDiagnostics } from "~/components/calibration-chart";
import { ActionErrors, ActionForm, ActionNotice, Notice } from "~/components/fields";
import { formAction } from "~/forms.server";
import { approveModelVersion, getModelVersion, retireModelVersion } from "~/models/model-versions.server";
import { DRIFT_COVERAGE_WARNING, DRIFT_MINIMUM_OUTCOMES, versionFormSchema } from "~/schemas/forecast";
import type { Route } from "./+types/models.$versionId";

export const meta: Route.MetaFunction = ({ data: d }) => [
  { title: d ? `${d.version.deviceTypeName} v${d.version.versionNumber} · Limberly` : "Model version · Limberly" },
];

// One model version: its diagnostics as saved, who fitted and approved it, drift since approval;
// approval by an assessor other than the one who fitted it.
export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "models.manage");
  const id = Number(params.versionId);
  const version = Number.isInteger(id) ? await getModelVersion(id) : null;
  invariantResponse(version, "No such model version.", { status: 404 });
  return {
    version,
    canApprove: version.status === "draft" && version.fittedById !== p.user.id,
    isFitter: version.fittedById === p.user.id,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const p = await requireUser(request, "models.manage");
  const id = Number(params.versionId);
  return formAction(await request.formData(), versionFormSchema, async (v) => {
    if (v.intent === "approve") {
      const r = await approveModelVersion(id, p.user.id);
      return `Approved. ${r.forecasts} worker forecasts now use this version.`;
    }
    await retireModelVersion(id, p.user.id);
    return "Retired. Forecasts made with it were withdrawn.";
  });
}

export default function ModelVersionPage({ loaderData }: Route.ComponentProps) {
  const { version: v, canApprove, isFitter } = loaderData;
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const [search] = useSearchParams();
  const when = (s: string | null) => (s ? s.slice(0, 16).replace("T", " ") : "—");
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">
          {v.deviceTypeName} — model v{v.versionNumber}
        </h1>
        <p className="text-ink-soft">
          Status: <strong data-testid="version-status">{v.status}</strong>. Measures: {v.measures.join(", ")}.
          {v.ridge > 0 ? ` Ridge penalty ${v.ridge}.` : ""}
        </p>
      </div>
      {search.get("saved") && !result && (
        <Notice>Saved as draft version {v.versionNumber}. Ask another assessor to review and approve it.</Notice>
      )}
      <ActionNotice result={result} />
      {/* A retired version has no form left to show an error in (e.g. retired twice from two tabs). */}
      {v.status === "retired" && <ActionErrors result={result} intent="retire" />}
      <section className="card grid gap-2 sm:grid-cols-3" aria-label="Who and when">
        <div>
          <p className="text-sm text-ink-soft">Fitted by</p>
          <p>
            {v.fittedBy ?? "—"} · {when(v.fittedAt)}
          </p>
        </div>
        <div>
          <p className="text-sm text-ink-soft">Approved by</p>
          <p data-testid="approved-by">
            {v.approvedBy ?? "not yet approved"}
            {v.approvedAt ? ` · ${when(v.approvedAt)}` : ""}
          </p>
        </div>
        <div>
          <p className="text-sm text-ink-soft">Retired</p>
          <p>{v.retiredAt ? `${v.retiredBy ?? "—"} · ${when(v.retiredAt)}` : "—"}</p>
        </div>
        {v.notes && (
          <p className="sm:col-span-3 text-sm">
            <span className="text-ink-soft">Notes: </span>
            {v.notes}
          </p>
        )}
      </section>
      {v.status === "draft" && (
        <section className="card" aria-labelledby="approve-h">
          <h2 id="approve-h" className="text-lg font-semibold">
            Review
          </h2>
          {isFitter ? (
            <p className="text-sm">You fitted this version, so another assessor must approve it.</p>
          ) : (
            <p className="text-sm">
              Check the cohort, exclusions and cross-validated accuracy below. Approving makes this the version used for
              forecasts and plans on this device type and retires the one in use.
            </p>
          )}
          <ActionForm result={result} className="mt-3 flex flex-wrap gap-3">
            {canApprove && (
              <button type="submit" className="btn-primary" name="intent" value="approve" disabled={busy}>
                Approve version {v.versionNumber}
              </button>
            )}
            <button type="submit" className="btn-quiet" name="intent" value="retire" disabled={busy}>
              Discard (retire)
            </button>
          </ActionForm>
        </section>
      )}
      {v.status === "approved" && (
        <section className="card" aria-labelledby="drift-h">
          <h2 id="drift-h" className="text-lg font-semibold">
            Drift since approval
          </h2>
          {v.drift.n === 0 ? (
            <p className="text-sm">No worker forecast with this version has reached proficiency yet.</p>
          ) : (
            <p className="text-sm" data-testid="drift">
              {v.drift.n} workers reached proficiency: mean absolute error {v.drift.maeHours!.toFixed(1)} h;{" "}
              {Math.round(v.drift.coverage80! * 100)} % inside their 80 % interval.
            </p>
          )}
          {v.drift.warn && (
            <p role="alert" className="mt-2 rounded-md bg-alert-wash p-3 text-alert">
              Coverage is below {Math.round(DRIFT_COVERAGE_WARNING * 100)} %: the intervals are too narrow for current
              trainees. Consider refitting.
            </p>
          )}
          {v.drift.n > 0 && v.drift.n < DRIFT_MINIMUM_OUTCOMES && (
            <p className="text-xs text-ink-soft">Too few outcomes to judge drift (needs {DRIFT_MINIMUM_OUTCOMES}).</p>
          )}
          <ActionForm result={result} className="mt-3">
            <button type="submit" className="btn-quiet" name="intent" value="retire" disabled={busy}>
              Retire this version
            </button>
          </ActionForm>
        </section>
      )}
      <ModelDiagnostics fit={v} />
    </div>
  );
}
