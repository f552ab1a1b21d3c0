import { data, Link, redirect, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { can } from "~/auth/permissions";
import { consentText, StageBadge } from "~/components/badges";
import {
  ActionForm,
  ActionNotice,
  CheckboxField,
  FieldMessage,
  SelectField,
  TextArea,
  TextField,
} from "~/components/fields";
import { ProfileChart, type ProfilePoint } from "~/components/profile-chart";
import { SwayMethod } from "~/components/sway-method";
import { WithdrawConsent } from "~/components/withdraw-consent";
import { todayIn } from "~/dates";
import { CONSENT_PURPOSES } from "~/domain/consent-purposes";
import { formAction } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import { createSession, sessionsForWorker, workerForStaff } from "~/models/assessments.server";
import {
  consentHistory,
  consentState,
  currentConsentTexts,
  listWitnesses,
  recordConsent,
} from "~/models/consent.server";
import { coursesNeedingReview, reviewPath } from "~/models/course-reviews.server";
import { listNormSets } from "~/models/norms.server";
import { changesSincePrevious, reliabilityByMeasure } from "~/models/reliability-report.server";
import { workerTimeZone } from "~/models/sites.server";
import { withdrawConsent } from "~/models/withdrawal.server";
import { PURPOSE_LABELS, workerRecordSchema } from "~/schemas/consent";
import type { Route } from "./+types/assess.workers.$workerId";

export const meta: Route.MetaFunction = ({ data: d }) => [
  { title: `${d?.worker.employeeNumber ?? "Worker"} · Limberly` },
];

function workerIdOf(params: { workerId?: string }): number {
  const id = Number(params.workerId);
  if (!Number.isInteger(id) || id <= 0) throw data({ error: "No such worker." }, { status: 404 });
  return id;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "assessments.read");
  const workerId = workerIdOf(params);
  const worker = await workerForStaff(p.scope, workerId);
  if (!worker) throw data({ error: "No such worker at your sites." }, { status: 404 });
  const [consent, history, sessions, reliability, normSets, witnesses, texts, toReview] = await Promise.all([
    consentState(workerId),
    consentHistory(workerId),
    sessionsForWorker(workerId),
    reliabilityByMeasure(),
    listNormSets(),
    listWitnesses(),
    currentConsentTexts(),
    can(p, "courses.review") ? coursesNeedingReview(workerId) : Promise.resolve([]),
  ]);
  await recordAccess(p, request, workerId, "assessment");
  const relMap = new Map(reliability.map((r) => [r.measureId, r]));
  const normSd = new Map<string, number>();
  const normName = new Map<number, string>();
  for (const n of normSets) {
    normName.set(n.id, n.name);
    for (const v of n.values) normSd.set(`${n.id}:${v.measureId}`, v.sd);
  }
  const latest = sessions.at(-1);
  const points: ProfilePoint[] = (latest?.results ?? [])
    .filter((r) => r.z != null)
    .map((r) => {
      const sd = r.normSetId ? normSd.get(`${r.normSetId}:${r.measureId}`) : undefined;
      const mdc = relMap.get(r.measureId)?.mdc95 ?? null;
      return {
        measure: r.name,
        z: r.z!,
        mdcZ: mdc != null && sd ? mdc / sd : null,
        normSet: r.normSetId ? (normName.get(r.normSetId) ?? null) : null,
        value: r.value,
        unit: r.unit,
      };
    });
  return {
    // The assessment form's default date: today on the worker's site clock.
    today: todayIn(await workerTimeZone(worker.id)),
    worker,
    consent,
    history,
    points,
    hasSway: (latest?.results ?? []).some((r) => r.code.startsWith("sway.")),
    latestOn: latest?.assessedOn ?? null,
    sessions: sessions
      .map((s) => ({
        id: s.id,
        assessedOn: s.assessedOn,
        assessor: s.assessor,
        notes: s.notes,
        results: s.results.length,
        uploads: s.uploads.length,
      }))
      .reverse(),
    changes: changesSincePrevious(sessions, relMap),
    witnesses,
    me: p.user.id,
    texts: Object.fromEntries(
      CONSENT_PURPOSES.map((pp) => [pp, texts[pp] ? { version: texts[pp]!.version, body: texts[pp]!.body } : null]),
    ),
    canConsent: can(p.user, "consent.manage"),
    canWrite: can(p.user, "assessments.write"),
    toReview: toReview.map((c) => ({ ...c, href: reviewPath(workerId, c.deviceTypeId) })),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const formData = await request.formData();
  const workerId = workerIdOf(params);
  // Starting a session and managing consent need different permissions: the intent picks which, before parsing.
  const p = await requireUser(request, formData.get("intent") === "session" ? "assessments.write" : "consent.manage");
  if (!(await workerForStaff(p.scope, workerId)))
    throw data({ error: "No such worker at your sites." }, { status: 404 });
  return formAction(formData, workerRecordSchema, async (v) => {
    switch (v.intent) {
      case "consent":
        await recordConsent({
          workerId,
          purposes: v.purposes,
          witnessUserId: v.witnessUserId,
          recordedBy: p.user.id,
        });
        return `Consent recorded for: ${v.purposes.join(", ")}.`;
      case "withdraw": {
        const r = await withdrawConsent({ workerId, purpose: v.purpose, recordedBy: p.user.id });
        const erased = Object.entries(r.erased)
          .filter(([, n]) => n > 0)
          .map(([what, n]) => `${what}: ${n}`)
          .join(", ");
        const label = v.purpose[0].toUpperCase() + v.purpose.slice(1);
        return `${label} consent withdrawn. ${erased ? `Erased at once (rows deleted): ${erased}.` : "There were no data to erase."}`;
      }
      case "session": {
        const id = await createSession({
          workerId,
          assessedOn: v.assessedOn,
          notes: v.notes,
          assessorUserId: p.user.id,
        });
        throw redirect(`/assess/workers/${workerId}/sessions/${id}`);
      }
    }
  });
}

const fmt = (v: number) => (Math.abs(v) >= 100 ? v.toFixed(1) : v.toPrecision(3));

export default function WorkerRecord({ loaderData, actionData }: Route.ComponentProps) {
  const {
    today,
    worker,
    consent,
    history,
    points,
    hasSway,
    latestOn,
    sessions,
    changes,
    witnesses,
    me,
    texts,
    canConsent,
    canWrite,
    toReview,
  } = loaderData;
  const busy = useNavigation().state === "submitting";
  const assessmentGiven = consent.assessment.status === "given";
  // A purpose given on the current text collapses to its summary; the record form asks only for the others.
  const givenPurposes = CONSENT_PURPOSES.filter((pp) => consent[pp].status === "given");
  const openPurposes = CONSENT_PURPOSES.filter((pp) => consent[pp].status !== "given" || consent[pp].needsRenewal);
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link to="/assess/workers" className="text-spruce-700 underline">
            Workers
          </Link>
        </p>
        <h1 className="page-title" data-testid="worker-name">
          {worker.name}
        </h1>
        <p className="text-ink-soft">
          {worker.employeeNumber} · {worker.site} · {worker.department} · <StageBadge stage={worker.stage} />
        </p>
        <p className="mt-1 text-xs text-ink-soft">
          Opening this record is written to the access log; the worker can see who read it.
        </p>
      </div>
      <ActionNotice result={actionData} />

      {toReview.length > 0 && (
        <section className="card grid gap-2 border-alert" aria-labelledby="review-h" data-testid="courses-to-review">
          <h2 id="review-h" className="text-lg font-semibold">
            Courses to review
          </h2>
          <ul className="grid gap-2">
            {toReview.map((c) => (
              <li key={c.deviceTypeId}>
                <Link to={c.href} className="font-medium text-spruce-700 underline">
                  {c.deviceType}: {c.status === "paused" ? "paused, review and decide" : "safety finding to review"}
                </Link>
                {c.pauseReason && <p className="text-sm text-ink-soft">{c.pauseReason}</p>}
              </li>
            ))}
          </ul>
        </section>
      )}

      <section className="card grid gap-4" aria-labelledby="consent-h" data-testid="consent-section">
        <h2 id="consent-h" className="text-lg font-semibold">
          Consent
        </h2>
        <ul className="grid gap-2" data-testid="consent-state">
          {CONSENT_PURPOSES.map((pp) => (
            <li key={pp} className="flex flex-wrap items-center justify-between gap-2 border-b border-line pb-2">
              <span>
                <span className="font-medium">{PURPOSE_LABELS[pp]}</span>:{" "}
                <span data-testid={`consent-${pp}`}>{consentText(consent[pp])}</span>
              </span>
              {consent[pp].needsRenewal && (
                <span className="text-sm text-amber-caution">
                  A new text (v{consent[pp].currentVersion}) is in force: ask for renewed consent.
                </span>
              )}
            </li>
          ))}
        </ul>
        {canConsent && openPurposes.length > 0 && (
          <ActionForm
            key={CONSENT_PURPOSES.map((pp) => consent[pp].status + consent[pp].version).join()}
            intent="consent"
            result={actionData}
            className="grid gap-3"
            aria-labelledby="record-consent-h"
          >
            <h3 id="record-consent-h" className="font-semibold">
              Record consent
            </h3>
            <fieldset className="grid gap-2">
              <legend className="field-label">Purposes the worker agrees to (each against the text in force)</legend>
              {openPurposes.map((pp) => (
                <div key={pp} className="rounded-md border border-line p-2">
                  <label className="flex min-h-11 items-center gap-2">
                    <input type="checkbox" name="purposes" value={pp} className="size-5" />
                    <span>
                      {PURPOSE_LABELS[pp]} {texts[pp] ? `(text v${texts[pp]!.version})` : "(no text in force)"}
                    </span>
                  </label>
                  {texts[pp] && (
                    <details className="text-sm">
                      <summary className="cursor-pointer text-spruce-700">Read the text shown to the worker</summary>
                      <p className="mt-1 whitespace-pre-line">{texts[pp]!.body}</p>
                    </details>
                  )}
                </div>
              ))}
              <FieldMessage name="purposes" />
            </fieldset>
            <SelectField
              name="witnessUserId"
              label="Witnessed by (assessor)"
              required
              defaultValue={String(me)}
              options={witnesses.map((w) => ({ value: String(w.id), label: w.display_name }))}
            />
            <CheckboxField
              name="confirmRead"
              label="The worker was shown the current text of each ticked purpose and agreed."
            />
            <div>
              <button type="submit" className="btn-primary" disabled={busy}>
                Record consent
              </button>
            </div>
          </ActionForm>
        )}
        {canConsent && givenPurposes.length > 0 && (
          // Given consent is a summary above; withdrawing is behind "Change", with the one confirmation pattern.
          <details data-testid="consent-change">
            <summary className="cursor-pointer text-spruce-700">Change (withdraw a consent)</summary>
            <div className="mt-3 grid gap-3">
              {givenPurposes.map((pp) => (
                <WithdrawConsent key={pp} purpose={pp} reader="staff" result={actionData} busy={busy} />
              ))}
            </div>
          </details>
        )}
        <details>
          <summary className="cursor-pointer text-spruce-700">Consent history ({history.length})</summary>
          <div className="overflow-x-auto">
            <table className="table-base mt-2">
              <caption className="sr-only">Consent history</caption>
              <thead>
                <tr>
                  <th scope="col">When</th>
                  <th scope="col">Purpose</th>
                  <th scope="col">Status</th>
                  <th scope="col">Text</th>
                  <th scope="col">Witness</th>
                  <th scope="col">Recorded by</th>
                </tr>
              </thead>
              <tbody>
                {history.map((h) => (
                  <tr key={h.id}>
                    <td>{h.at.slice(0, 16).replace("T", " ")}</td>
                    <td>{h.purpose}</td>
                    <td>{h.status}</td>
                    <td>v{h.version}</td>
                    <td>{h.witness ?? "—"}</td>
                    <td>{h.recordedBy ?? "—"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </details>
      </section>

      <section className="card grid gap-3" aria-labelledby="profile-h">
        <h2 id="profile-h" className="text-lg font-semibold">
          Coordination profile
        </h2>
        <ProfileChart
          points={points}
          title={
            latestOn ? `Baseline of ${latestOn}: z-scores (positive = better) with MDC95 bands` : "No baseline yet"
          }
        />
      </section>
      {hasSway && <SwayMethod />}

      {changes.length > 0 && (
        <section className="card grid gap-3" aria-labelledby="change-h">
          <h2 id="change-h" className="text-lg font-semibold">
            Change since the previous baseline
          </h2>
          <p className="text-sm text-ink-soft">
            A change counts as real only when it is clearly larger than measurement error (the reliable change index,
            from repeated baselines) for this many measures at once: checked with Holm's correction so that, across all
            measures compared, a false "real change" happens at most 5 % of the time.
          </p>
          <div className="overflow-x-auto">
            <table className="table-base" data-testid="change-table">
              <caption className="sr-only">Change since the previous baseline</caption>
              <thead>
                <tr>
                  <th scope="col">Measure</th>
                  <th scope="col">Previous</th>
                  <th scope="col">Latest</th>
                  <th scope="col">Change</th>
                  <th scope="col">MDC95</th>
                  <th scope="col">RCI (Holm p)</th>
                  <th scope="col">Verdict</th>
                </tr>
              </thead>
              <tbody>
                {changes.map((c) => (
                  <tr key={c.measureId}>
                    <th scope="row" className="font-normal">
                      {c.name}
                    </th>
                    <td>{fmt(c.previous)}</td>
                    <td>{fmt(c.latest)}</td>
                    <td>
                      {c.change > 0 ? "+" : ""}
                      {fmt(c.change)} {c.unit}
                    </td>
                    <td>{c.mdc95 != null ? fmt(c.mdc95) : "—"}</td>
                    <td>
                      {c.rci == null || c.adjustedP == null
                        ? "—"
                        : `${c.rci.toFixed(2)} (${c.adjustedP.toPrecision(2)})`}
                    </td>
                    <td
                      className={
                        c.verdict === "better"
                          ? "text-spruce-700 font-medium"
                          : c.verdict === "worse"
                            ? "text-alert font-medium"
                            : ""
                      }
                    >
                      {c.verdict === "better"
                        ? "Real improvement"
                        : c.verdict === "worse"
                          ? "Real decline"
                          : c.verdict === "within error"
                            ? "Within measurement error"
                            : "No MDC yet"}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </section>
      )}

      <section className="card grid gap-3" aria-labelledby="sessions-h">
        <h2 id="sessions-h" className="text-lg font-semibold">
          Assessment sessions
        </h2>
        {sessions.length === 0 ? (
          <p className="text-ink-soft">None yet.</p>
        ) : (
          <ul className="grid gap-2">
            {sessions.map((s) => (
              <li key={s.id} className="flex flex-wrap justify-between gap-2 border-b border-line pb-2">
                <Link
                  className="font-medium text-spruce-700 underline"
                  to={`/assess/workers/${worker.id}/sessions/${s.id}`}
                >
                  Session of {s.assessedOn}
                </Link>
                <span className="text-sm text-ink-soft">
                  {s.results} results · {s.uploads} traces{s.assessor ? ` · ${s.assessor}` : ""}
                </span>
              </li>
            ))}
          </ul>
        )}
        {canWrite &&
          (assessmentGiven ? (
            <ActionForm intent="session" result={actionData} className="grid gap-3 sm:grid-cols-2">
              <TextField name="assessedOn" label="Date of assessment" type="date" required defaultValue={today} />
              <div className="sm:col-span-2">
                <TextArea name="notes" label="Notes (optional)" rows={2} />
              </div>
              <div className="sm:col-span-2">
                <button type="submit" className="btn-primary" disabled={busy}>
                  Start assessment session
                </button>
              </div>
            </ActionForm>
          ) : (
            <p className="rounded-md bg-amber-wash p-3 text-sm text-amber-caution">
              No assessment can be recorded: this worker has not given assessment consent.
            </p>
          ))}
      </section>
    </div>
  );
}
