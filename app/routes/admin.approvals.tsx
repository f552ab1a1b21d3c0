import { Form, useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionErrors, ActionNotice } from "~/components/fields";
import { formatInstant } from "~/dates";
import { AUDIT_EVENT_LABELS } from "~/domain/privilege-events";
import { formAction } from "~/forms.server";
import { decideRequest, pendingRequests, privilegeAudit } from "~/models/duties.server";
import { viewerTimeZone } from "~/models/sites.server";
import { approvalFormSchema } from "~/schemas/admin";
import type { Route } from "./+types/admin.approvals";

export const meta: Route.MetaFunction = () => [{ title: "Approvals and role audit · Limberly" }];

// Clinical roles and clinical-scope API keys wait here for a second admin; below, the role and key audit log.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "admin.users");
  const [pending, audit, timeZone] = await Promise.all([pendingRequests(), privilegeAudit(), viewerTimeZone(p)]);
  return { pending, audit, timeZone, me: p.user.id };
}

export async function action({ request }: Route.ActionArgs) {
  const me = await requireUser(request, "admin.users");
  return formAction(await request.formData(), approvalFormSchema, (v) => decideRequest(me.user, v.requestId, v.intent));
}

export default function AdminApprovals({ loaderData }: Route.ComponentProps) {
  const { pending, audit, timeZone, me } = loaderData;
  const r = useActionData<typeof action>();
  return (
    <div className="grid gap-6">
      <h1 className="page-title">Approvals and role audit</h1>
      <p className="text-ink-soft">
        Roles that reach health data (assessor, trainer), given to a person or to an API key, take effect only when a
        second admin approves them. Nobody changes their own roles.
      </p>
      <ActionNotice result={r} />
      <ActionErrors result={r} intent="approve" />
      <ActionErrors result={r} intent="refuse" />
      <section className="card" aria-labelledby="pending">
        <h2 id="pending" className="text-lg font-semibold">
          Waiting for a second admin
        </h2>
        {pending.length === 0 && <p className="mt-2 text-ink-soft">Nothing is waiting.</p>}
        <ul className="mt-3 divide-y divide-line">
          {pending.map((p) => (
            <li key={p.id} className="flex flex-wrap items-center justify-between gap-2 py-2">
              <span>
                <strong>{p.subject}</strong>
                <span className="block text-sm text-ink-soft">
                  asked by {p.requestedBy}, {formatInstant(p.createdAt, timeZone)}
                </span>
              </span>
              {p.requestedById === me || p.targetUserId === me ? (
                <span className="text-sm text-ink-soft">Another admin must decide this.</span>
              ) : (
                <span className="flex gap-2">
                  {(["approve", "refuse"] as const).map((intent) => (
                    <Form method="post" key={intent}>
                      <input type="hidden" name="intent" value={intent} />
                      <input type="hidden" name="requestId" value={p.id} />
                      <button
                        type="submit"
                        className={intent === "approve" ? "btn-primary" : "btn-quiet"}
                        aria-label={`${intent === "approve" ? "Approve" : "Refuse"}: ${p.subject}`}
                      >
                        {intent === "approve" ? "Approve" : "Refuse"}
                      </button>
                    </Form>
                  ))}
                </span>
              )}
            </li>
          ))}
        </ul>
      </section>
      <section className="card overflow-x-auto p-0" tabIndex={0} aria-labelledby="audit">
        <h2 id="audit" className="p-4 text-lg font-semibold">
          Role and key audit log
        </h2>
        <table className="table-base">
          <caption className="sr-only">Role and key audit log, newest first</caption>
          <thead>
            <tr>
              <th scope="col">When ({timeZone})</th>
              <th scope="col">Who</th>
              <th scope="col">What</th>
              <th scope="col">Grant or key</th>
            </tr>
          </thead>
          <tbody>
            {audit.length === 0 && (
              <tr>
                <td colSpan={4} className="text-center text-ink-soft">
                  No entries yet.
                </td>
              </tr>
            )}
            {audit.map((a) => (
              <tr key={a.id} data-testid="audit-row">
                <td>{formatInstant(a.at, timeZone)}</td>
                <td>{a.actor}</td>
                <td>{AUDIT_EVENT_LABELS[a.event]}</td>
                <td>{a.subject}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}
