import { invariantResponse } from "@epic-web/invariant";
import { Form, Link, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionErrors, ActionForm, ActionNotice, SelectField } from "~/components/fields";
import { IssueList } from "~/components/upload";
import { formAction } from "~/forms.server";
import {
  discardRosterUpload,
  getRosterUpload,
  importRosterUpload,
  planRoster,
  type RosterSummary,
  rosterOutcome,
  saveMapping,
} from "~/models/roster.server";
import { viewerTimeZone } from "~/models/sites.server";
import { ROSTER_FIELD_LABELS, ROSTER_FIELDS, rosterPageSchema } from "~/schemas/roster";
import type { Route } from "./+types/assess.roster.$importId";

export const meta: Route.MetaFunction = () => [{ title: "Roster preview · Limberly" }];
const SHOWN = 200;

function idOf(params: { importId?: string }) {
  const id = Number(params.importId);
  invariantResponse(Number.isInteger(id) && id > 0, "No such import.", { status: 404 });
  return id;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "roster.import");
  const up = await getRosterUpload(idOf(params), p.user.id);
  invariantResponse(up, "No such roster upload of yours.", { status: 404 });
  const base = {
    id: up.id,
    filename: up.filename,
    sizeBytes: up.sizeBytes,
    rowCount: up.rowCount,
    headers: up.headers,
    mapping: up.mapping,
    status: up.status,
    summary: up.summary,
    outcome: rosterOutcome(up, await viewerTimeZone(p)),
  };
  if (up.status !== "uploaded" || !up.rows) return { ...base, preview: null, sample: [] as string[][] };
  const missing = ROSTER_FIELDS.filter((f) => f !== "email" && up.mapping[f] == null);
  const plan = missing.length ? null : await planRoster(up.rows, up.mapping, p.scope);
  return {
    ...base,
    sample: up.rows.slice(0, 3),
    preview: plan && {
      rowCount: plan.rowCount,
      invalidRows: plan.invalidRows,
      issueCount: plan.issues.length,
      issues: plan.issues
        .slice(0, SHOWN)
        .map((i) => ({ row: i.row, field: i.field ? ROSTER_FIELD_LABELS[i.field] : undefined, message: i.message })),
      creates: plan.creates.length,
      updates: plan.updates.length,
      unchanged: plan.unchanged,
      updateSample: plan.updates
        .slice(0, 20)
        .map((u) => ({ row: u.row.row, employeeNumber: u.row.employeeNumber, fields: u.fields })),
    },
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const p = await requireUser(request, "roster.import");
  const id = idOf(params);
  const up = await getRosterUpload(id, p.user.id);
  invariantResponse(up, "No such roster upload of yours.", { status: 404 });
  return formAction(await request.formData(), rosterPageSchema(up.headers.length), async (v) => {
    switch (v.intent) {
      case "map":
        await saveMapping(id, p.user.id, v.map);
        return "Column mapping saved; the preview below uses it.";
      case "import":
        return { notice: "Roster imported.", payload: await importRosterUpload(id, p) };
      case "discard":
        await discardRosterUpload(id, p.user.id);
        return { notice: "Upload discarded; nothing was imported.", payload: null };
    }
  });
}

function Summary({ s }: { s: RosterSummary }) {
  return (
    <section className="card grid gap-2" aria-labelledby="sum-h" data-testid="import-summary">
      <h2 id="sum-h" className="text-lg font-semibold">
        What changed
      </h2>
      <p>
        <strong>{s.created}</strong> new workers · <strong>{s.updated}</strong> updated · <strong>{s.unchanged}</strong>{" "}
        unchanged · <strong>{s.skipped}</strong> rows skipped for errors
      </p>
      {s.changes.length > 0 && (
        <details>
          <summary className="cursor-pointer text-spruce-700">
            Changed rows ({s.changes.length}
            {s.changes.length === 1000 ? "+" : ""})
          </summary>
          <ul className="mt-2 grid gap-1 text-sm">
            {s.changes.map((c) => (
              <li key={c.row}>
                Row {c.row}: {c.employeeNumber} {c.kind === "create" ? "added" : `updated (${c.fields.join(", ")})`}
              </li>
            ))}
          </ul>
        </details>
      )}
      <p>
        <Link className="text-spruce-700 underline" to="/assess/workers">
          Go to the worker list
        </Link>
      </p>
    </section>
  );
}

export default function RosterPreview({ loaderData }: Route.ComponentProps) {
  const d = loaderData;
  const r = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const summary = r?.payload ?? d.summary;
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link to="/assess/roster" className="text-spruce-700 underline">
            Roster import
          </Link>
        </p>
        <h1 className="page-title">{d.filename}</h1>
        <p className="text-ink-soft">
          {d.rowCount} data rows · {d.headers.length} columns · {d.status}
        </p>
      </div>
      <ActionNotice result={r} />
      <ActionErrors result={r} intent="import" />
      <ActionErrors result={r} intent="discard" />
      {d.outcome && (
        <p className="card font-medium" role="status" data-testid="import-outcome">
          {d.outcome}.{d.status === "imported" ? " Every valid row of this file was written in one transaction." : ""}
        </p>
      )}
      {summary && <Summary s={summary} />}
      {d.status === "uploaded" && (
        <>
          <section className="card grid gap-3" aria-labelledby="map-h">
            <h2 id="map-h" className="text-lg font-semibold">
              2. Map the columns
            </h2>
            <ActionForm intent="map" result={r} className="grid gap-3 sm:grid-cols-3">
              {ROSTER_FIELDS.map((f) => (
                <SelectField
                  key={f}
                  name={`map.${f}`}
                  label={ROSTER_FIELD_LABELS[f]}
                  required={f !== "email"}
                  defaultValue={d.mapping[f] == null ? "" : String(d.mapping[f])}
                  options={[
                    { value: "", label: "— not in the file —" },
                    ...d.headers.map((h, i) => ({
                      value: String(i),
                      label: `${h || `(column ${i + 1})`}${d.sample[0]?.[i] ? ` — e.g. ${d.sample[0][i]}` : ""}`,
                    })),
                  ]}
                />
              ))}
              <div className="sm:col-span-3">
                <button type="submit" className="btn-quiet" disabled={busy}>
                  Apply mapping and preview
                </button>
              </div>
            </ActionForm>
          </section>
          <section className="card grid gap-3" aria-labelledby="prev-h" data-testid="roster-preview">
            <h2 id="prev-h" className="text-lg font-semibold">
              3. Preview
            </h2>
            {!d.preview ? (
              <p className="text-ink-soft">Map every required column to see the preview.</p>
            ) : (
              <>
                <p data-testid="preview-counts">
                  {d.preview.rowCount} rows: <strong>{d.preview.creates}</strong> new,{" "}
                  <strong>{d.preview.updates}</strong> to update, <strong>{d.preview.unchanged}</strong> unchanged,{" "}
                  <strong>{d.preview.invalidRows}</strong> with errors (skipped).
                </p>
                <IssueList
                  title={`${d.preview.invalidRows} row(s) have errors and will not be imported${d.preview.issueCount > SHOWN ? ` (first ${SHOWN} of ${d.preview.issueCount} problems shown)` : ""}:`}
                  issues={d.preview.issues}
                />
                {d.preview.updateSample.length > 0 && (
                  <details>
                    <summary className="cursor-pointer text-spruce-700">Updates ({d.preview.updates})</summary>
                    <ul className="mt-2 grid gap-1 text-sm">
                      {d.preview.updateSample.map((u) => (
                        <li key={u.row}>
                          Row {u.row}: {u.employeeNumber}: {u.fields.join(", ")}
                        </li>
                      ))}
                    </ul>
                  </details>
                )}
                <div className="flex flex-wrap gap-3">
                  <Form method="post">
                    <input type="hidden" name="intent" value="import" />
                    <button
                      type="submit"
                      className="btn-primary"
                      disabled={busy || d.preview.creates + d.preview.updates === 0}
                    >
                      Import {d.preview.creates + d.preview.updates} valid row(s)
                    </button>
                  </Form>
                  <Form method="post">
                    <input type="hidden" name="intent" value="discard" />
                    <button type="submit" className="btn-quiet" disabled={busy}>
                      Discard upload
                    </button>
                  </Form>
                </div>
                <p className="text-sm text-ink-soft">
                  The import is one transaction: every valid row is written, or (on any failure) none.
                </p>
              </>
            )}
          </section>
        </>
      )}
    </div>
  );
}
