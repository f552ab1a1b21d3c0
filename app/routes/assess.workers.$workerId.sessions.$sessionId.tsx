import { data, Link, type ShouldRevalidateFunction, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { can } from "~/auth/permissions";
import { countUpload } from "~/auth/throttle.server";
import { DeviceCautions } from "~/components/device-cautions";
import { ActionForm, ActionNotice, FormError, SelectField, TextField } from "~/components/fields";
import { processingLine, SwayMethod } from "~/components/sway-method";
import { FileField, IssueList } from "~/components/upload";
import { MEASURE_DIRECTIONS } from "~/compute/features";
import { TRACE_KINDS } from "~/compute/trace-parsing";
import { UserError } from "~/errors";
import { type UploadField, uploadAction } from "~/forms.server";
import { keepRetryAfter } from "~/http/headers";
import { recordAccess } from "~/models/access-log.server";
import {
  rescoreSession,
  saveManualResults,
  saveTrace,
  sessionsForWorker,
  workerForStaff,
} from "~/models/assessments.server";
import { hasConsent } from "~/models/consent.server";
import { refreshSummary } from "~/models/forecast.server";
import { listMeasures } from "~/models/measures.server";
import { listNormSets } from "~/models/norms.server";
import {
  MAX_TRACE_BYTES,
  MAX_TRACE_ROWS,
  manualValues,
  sessionPageSchema,
  TRACE_KIND_LABELS,
} from "~/schemas/assessment";
import type { Route } from "./+types/assess.workers.$workerId.sessions.$sessionId";

export const meta: Route.MetaFunction = () => [{ title: "Assessment session · Limberly" }];

function ids(params: { workerId?: string; sessionId?: string }) {
  const workerId = Number(params.workerId);
  const sessionId = Number(params.sessionId);
  if (!Number.isInteger(workerId) || !Number.isInteger(sessionId))
    throw data({ error: "No such session." }, { status: 404 });
  return { workerId, sessionId };
}

// After any form on this page the results are reloaded, also when the action refused its input (4xx skips
// revalidation by default): a refused upload sent while the previous upload's reload was still on its way
// would otherwise leave the results table one upload behind.
export const shouldRevalidate: ShouldRevalidateFunction = ({ formMethod, defaultShouldRevalidate }) =>
  formMethod ? true : defaultShouldRevalidate;

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "assessments.read");
  const { workerId, sessionId } = ids(params);
  const worker = await workerForStaff(p.scope, workerId);
  if (!worker) throw data({ error: "No such worker at your sites." }, { status: 404 });
  const session = (await sessionsForWorker(workerId)).find((s) => s.id === sessionId);
  if (!session) throw data({ error: "No such session for this worker." }, { status: 404 });
  const [measures, normSets, consented] = await Promise.all([
    listMeasures({ activeOnly: true }),
    listNormSets(),
    hasConsent(workerId, "assessment"),
  ]);
  await recordAccess(p, request, workerId, session.uploads.length ? "trace" : "assessment");
  return {
    worker,
    session,
    consented,
    manual: measures.filter((m) => m.entry === "manual"),
    traceMeasures: measures.filter((m) => m.entry === "trace"),
    normSets: normSets.map((n) => ({ id: n.id, name: n.name })),
    canWrite: can(p.user, "assessments.write"),
  };
}

// A refused upload (429) keeps its Retry-After on the `.data` answer.
export const headers = keepRetryAfter;

const TRACE_UPLOAD: UploadField = { name: "trace", label: "Trace file", maxBytes: MAX_TRACE_BYTES, intent: "upload" };

export async function action({ request, params }: Route.ActionArgs) {
  const p = await requireUser(request, "assessments.write");
  await countUpload(request, p.user.id);
  const { workerId, sessionId } = ids(params);
  if (!(await workerForStaff(p.scope, workerId)))
    throw data({ error: "No such worker at your sites." }, { status: 404 });
  const manual = (await listMeasures({ activeOnly: true })).filter((m) => m.entry === "manual");
  return uploadAction(request, TRACE_UPLOAD, sessionPageSchema(manual), async (v, file) => {
    switch (v.intent) {
      case "manual": {
        const r = await saveManualResults({ workerId, sessionId, values: manualValues(v.m), userId: p.user.id });
        return `${r.count} score(s) saved. ${refreshSummary(r.forecasts)}`;
      }
      case "upload": {
        if (!file || file.size === 0)
          throw new UserError("choose a CSV file to upload (the file was empty or missing).", {
            field: TRACE_UPLOAD.name,
          });
        const result = await saveTrace({
          workerId,
          sessionId,
          kind: v.kind,
          filename: file.name,
          bytes: file.bytes,
          sampleRateHz: v.sampleRateHz,
          userId: p.user.id,
        });
        // A file with problems is not stored: 422 with each problem by row and column.
        return {
          notice: result.ok ? `${file.name} computed and stored. ${refreshSummary(result.forecasts)}`.trim() : null,
          payload: { ...result, filename: file.name },
          status: result.ok ? 200 : 422,
        };
      }
      case "rescore": {
        const r = await rescoreSession({ workerId, sessionId, normSetId: v.normSetId ?? null, userId: p.user.id });
        return `Re-scored: ${r.scored} of ${r.total} results have a z-score with the chosen norms. ${refreshSummary(r.forecasts)}`;
      }
    }
  });
}

const label = (key: string) =>
  (MEASURE_DIRECTIONS as Record<string, { label: string; unit: string }>)[key] ?? { label: key, unit: "" };
const fmt = (v: number) => (Number.isInteger(v) ? String(v) : Math.abs(v) >= 100 ? v.toFixed(1) : v.toPrecision(4));

export default function SessionPage({ loaderData, actionData }: Route.ComponentProps) {
  const { worker, session, consented, manual, traceMeasures, normSets, canWrite } = loaderData;
  const busy = useNavigation().state === "submitting";
  const byMeasure = new Map(session.results.map((x) => [x.measureId, x]));
  const upload = actionData?.intent === "upload" ? actionData.payload : undefined;
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link to={`/assess/workers/${worker.id}`} className="text-spruce-700 underline">
            {worker.name} ({worker.employeeNumber})
          </Link>
        </p>
        <h1 className="page-title">Assessment session of {session.assessedOn}</h1>
        <p className="text-ink-soft">
          {session.assessor ? `Assessor: ${session.assessor}` : ""}
          {session.notes ? ` · ${session.notes}` : ""}
        </p>
      </div>
      <DeviceCautions compact />
      {!consented && <FormError message="This worker has no given assessment consent: nothing more can be recorded." />}
      <ActionNotice result={actionData} />

      <section className="card grid gap-3" aria-labelledby="results-h">
        <h2 id="results-h" className="text-lg font-semibold">
          Results
        </h2>
        {session.results.length === 0 ? (
          <p className="text-ink-soft">No results yet.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="table-base" data-testid="results-table">
              <caption className="sr-only">Results of this session</caption>
              <thead>
                <tr>
                  <th scope="col">Measure</th>
                  <th scope="col">Value</th>
                  <th scope="col">z (positive = better)</th>
                  <th scope="col">Norm set</th>
                  <th scope="col">Source</th>
                </tr>
              </thead>
              <tbody>
                {session.results.map((x) => (
                  <tr key={x.measureId}>
                    <th scope="row" className="font-normal">
                      {x.name}
                    </th>
                    <td>
                      {fmt(x.value)} {x.unit}
                    </td>
                    <td>{x.z != null ? x.z.toFixed(2) : "—"}</td>
                    <td>{x.normSetName ?? "no norm"}</td>
                    <td>{x.traceUploadId ? `trace #${x.traceUploadId}` : "manual"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
        {canWrite && consented && normSets.length > 0 && (
          <ActionForm intent="rescore" result={actionData} className="flex flex-wrap items-end gap-3">
            <div className="grow">
              <SelectField
                name="normSetId"
                label="Score against norm set"
                options={[
                  { value: "", label: "Default per measure (latest norm holding it)" },
                  ...normSets.map((n) => ({ value: String(n.id), label: n.name })),
                ]}
              />
            </div>
            <button type="submit" className="btn-quiet" disabled={busy}>
              Re-score
            </button>
          </ActionForm>
        )}
      </section>

      {canWrite && consented && (
        <section className="card grid gap-3" aria-labelledby="manual-h">
          <h2 id="manual-h" className="text-lg font-semibold">
            Manual tests
          </h2>
          {manual.length === 0 ? (
            <p className="text-ink-soft">
              No manual measures are configured.{" "}
              <Link className="underline" to="/assess/measures">
                Add one
              </Link>
              .
            </p>
          ) : (
            <ActionForm intent="manual" result={actionData} className="grid gap-3 sm:grid-cols-2">
              {manual.map((m) => (
                <TextField
                  key={m.id}
                  name={`m.${m.id}`}
                  label={`${m.name} (${m.unit}, ${m.higherIsBetter ? "higher" : "lower"} is better)`}
                  defaultValue={byMeasure.get(m.id) ? String(byMeasure.get(m.id)!.value) : ""}
                />
              ))}
              <div className="sm:col-span-2">
                <button type="submit" className="btn-primary" disabled={busy}>
                  Save scores
                </button>
              </div>
            </ActionForm>
          )}
        </section>
      )}

      {canWrite && consented && (
        <section className="card grid gap-3" aria-labelledby="upload-h">
          <h2 id="upload-h" className="text-lg font-semibold">
            Upload a trace
          </h2>
          <p className="text-sm text-ink-soft">
            CSV with a header row; decimal points; at most {MAX_TRACE_ROWS.toLocaleString("en")} rows. Trace measures
            configured: {traceMeasures.map((m) => m.code).join(", ") || "none"}.
          </p>
          <ActionForm
            intent="upload"
            result={actionData}
            encType="multipart/form-data"
            className="grid gap-3 sm:grid-cols-2"
          >
            <SelectField
              name="kind"
              label="Trace kind"
              required
              options={TRACE_KINDS.map((k) => ({ value: k, label: TRACE_KIND_LABELS[k] }))}
            />
            <TextField
              name="sampleRateHz"
              label="Declared sample rate, Hz (optional)"
              hint="Checked against the timestamps when given."
            />
            <div className="sm:col-span-2">
              <FileField
                name={TRACE_UPLOAD.name}
                label={TRACE_UPLOAD.label}
                accept=".csv,text/csv"
                maxBytes={MAX_TRACE_BYTES}
                required
              />
            </div>
            <div className="sm:col-span-2">
              <button type="submit" className="btn-primary" disabled={busy}>
                {busy ? "Computing…" : "Upload and compute"}
              </button>
            </div>
          </ActionForm>
          {upload && !upload.ok && (
            <IssueList
              title={`${upload.filename} was not stored. Fix these and upload again:`}
              issues={upload.errors}
            />
          )}
          {upload?.ok && (
            <div
              className="grid gap-2 rounded-md border border-spruce-100 bg-spruce-50 p-3"
              data-testid="upload-result"
            >
              <p className="font-semibold">
                {upload.filename}: {upload.kind} trace, {upload.rowCount} rows
                {upload.sampleRateHz ? `, ${upload.sampleRateHz.toPrecision(4)} Hz` : ""}
              </p>
              {upload.processing && (
                <p className="text-sm" data-testid="upload-processing">
                  Processed before measuring: {processingLine(upload.processing)}.
                </p>
              )}
              <p className="break-all text-xs text-ink-soft">
                SHA-256 {upload.sha256} · {upload.sizeBytes.toLocaleString("en")} bytes
              </p>
              <table className="table-base">
                <caption className="sr-only">Computed values</caption>
                <thead>
                  <tr>
                    <th scope="col">Output</th>
                    <th scope="col">Value</th>
                    <th scope="col">Stored as result</th>
                  </tr>
                </thead>
                <tbody>
                  {Object.entries(upload.computed).map(([k, v]) => (
                    <tr key={k}>
                      <th scope="row" className="font-normal">
                        {label(k).label}
                      </th>
                      <td>
                        {fmt(v)} {label(k).unit}
                      </td>
                      <td>{upload.scored.includes(k) ? "yes" : "kept with the upload"}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          )}
        </section>
      )}

      <section className="card grid gap-3" aria-labelledby="uploads-h">
        <h2 id="uploads-h" className="text-lg font-semibold">
          Stored traces
        </h2>
        {session.uploads.length === 0 ? (
          <p className="text-ink-soft">None.</p>
        ) : (
          <ul className="grid gap-2">
            {session.uploads.map((u) => (
              <li key={u.id} className="border-b border-line pb-2 text-sm">
                <span className="font-medium">
                  #{u.id} {u.filename}
                </span>{" "}
                · {u.kind} · {u.rowCount} rows · {u.sizeBytes.toLocaleString("en")} bytes
                {u.sampleRateHz ? ` · ${u.sampleRateHz.toPrecision(4)} Hz` : ""}
                {u.processing && <span className="block text-xs">Processed: {processingLine(u.processing)}</span>}
                <span className="block break-all text-xs text-ink-soft">SHA-256 {u.sha256}</span>
              </li>
            ))}
          </ul>
        )}
      </section>
      {(session.uploads.some((u) => u.kind === "sway") ||
        session.results.some((x) => x.code.startsWith("sway.")) ||
        (upload?.ok && upload.kind === "sway")) && <SwayMethod />}
    </div>
  );
}
