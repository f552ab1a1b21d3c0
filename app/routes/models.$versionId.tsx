import { invariantResponse } from "@epic-web/invariant";
import { useActionData, useNavigation, useSearchParams } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ModelDiagnostics } from "~/components/calibration-chart";
import { DriftSummary } from "~/components/drift-summary";
import { ActionErrors, ActionForm, ActionNotice, CheckboxField, Notice } from "~/components/fields";
import { formAction } from "~/forms.server";
import {
  approvalPreview,
  approveModelVersion,
  getModelVersion,
  listModelVersions,
  retireModelVersion,
} from "~/models/model-versions.server";
import { versionFormSchema } from "~/schemas/forecast";
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
  const canApprove = version.status === "draft" && version.fittedById !== p.user.id;
  const inUse =
    version.status === "draft"
      ? ((await listModelVersions()).find((v) => v.deviceTypeId === version.deviceTypeId && v.status === "approved") ??
        null)
      : null;
  return {
    version,
    canApprove,
    isFitter: version.fittedById === p.user.id,
    inUse,
    preview: canApprove ? await approvalPreview(version.id) : null,
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
  const { version: v, canApprove, isFitter, inUse, preview } = loaderData;
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
          {v.normSet ? ` Norm set: ${v.normSet.name}.` : ""}
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
              Check the cohort, what was left out and how the planning figure held when each past trainee was left out
              in turn (below). Approving makes this the version used for forecasts and plans on this device type and
              retires the one in use.
            </p>
          )}
          {inUse && <Comparison draft={v} inUse={inUse} />}
          <ActionForm result={result} className="mt-3 grid gap-3">
            {canApprove && preview && (
              <CheckboxField
                name="confirm"
                value="yes"
                label={`I have compared the two versions: approving changes ${preview.changed} worker forecast${preview.changed === 1 ? "" : "s"} on this device type (${preview.added} new, ${preview.removed} withdrawn).`}
              />
            )}
            <div className="flex flex-wrap gap-3">
              {canApprove && (
                <button type="submit" className="btn-primary" name="intent" value="approve" disabled={busy}>
                  Approve version {v.versionNumber}
                </button>
              )}
              <button type="submit" className="btn-quiet" name="intent" value="retire" disabled={busy}>
                Discard (retire)
              </button>
            </div>
          </ActionForm>
        </section>
      )}
      {v.status === "approved" && (
        <section className="card" aria-labelledby="drift-h">
          <h2 id="drift-h" className="text-lg font-semibold">
            Drift since approval
          </h2>
          <DriftSummary drift={v.drift} />
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

type Summary = Route.ComponentProps["loaderData"]["version"];
type InUse = NonNullable<Route.ComponentProps["loaderData"]["inUse"]>;

const pct = (x: number | null | undefined) => (x == null ? "—" : `${Math.round(x * 100)} %`);

/** The draft beside the version in use, on the figures an approver weighs. */
function Comparison({ draft, inUse }: { draft: Summary; inUse: InUse }) {
  const rows: [string, (v: Summary | InUse) => string][] = [
    [
      "Fitted on",
      (v) => (v.method === "lognormal-aft" ? "everyone, still in training counted" : "finished trainees only"),
    ],
    ["Past trainees", (v) => String(v.cohortSize)],
    [
      "Still in training or stopped",
      (v) => (v.stillTraining == null ? "left out" : String(v.stillTraining + (v.stopped ?? 0))),
    ],
    ["Finished within the planning figure", (v) => pct(v.loocvPlanningCoverage)],
    ["Inside the 80 % range", (v) => pct(v.loocvCoverage80)],
    ["Typical miss of the middle forecast", (v) => `${v.loocvMaeHours.toFixed(1)} h`],
    ["Norm set", (v) => v.normSet?.name ?? "newest at each scoring"],
  ];
  return (
    <div className="mt-3 overflow-x-auto">
      <table className="table-base text-sm" data-testid="comparison">
        <caption className="text-left font-semibold">
          Compared with the version in use (checked by leaving out one past trainee at a time)
        </caption>
        <thead>
          <tr>
            <th scope="col">Figure</th>
            <th scope="col">This draft (v{draft.versionNumber})</th>
            <th scope="col">In use (v{inUse.versionNumber})</th>
          </tr>
        </thead>
        <tbody>
          {rows.map(([label, value]) => (
            <tr key={label}>
              <th scope="row" className="font-normal">
                {label}
              </th>
              <td>{value(draft)}</td>
              <td>{value(inUse)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
