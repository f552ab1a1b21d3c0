import { invariantResponse } from "@epic-web/invariant";
import { Form, useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ROLE_LABELS, ROLES } from "~/auth/permissions";
import { ActionErrors, ActionForm, ActionNotice, CheckboxField, SelectField, TextField } from "~/components/fields";
import { departmentOptions, siteOptions } from "~/components/scope-options";
import { UserError } from "~/errors";
import { formAction } from "~/forms.server";
import { addAssignment, removeAssignment, updateUser, userDetail } from "~/models/admin-users.server";
import { listDepartments, listSites } from "~/models/sites.server";
import { userFormSchema } from "~/schemas/admin";
import type { Route } from "./+types/admin.users.$userId";

export const meta: Route.MetaFunction = () => [{ title: "User · Limberly" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const me = await requireUser(request, "admin.users");
  const user = await userDetail(Number(params.userId));
  invariantResponse(user, "No such user.", { status: 404 });
  const [sites, departments] = await Promise.all([listSites(), listDepartments()]);
  return { user, sites, departments, own: user.id === me.user.id };
}

export async function action({ request, params }: Route.ActionArgs) {
  const me = await requireUser(request, "admin.users");
  const userId = Number(params.userId);
  invariantResponse(await userDetail(userId), "No such user.", { status: 404 });
  return formAction(await request.formData(), userFormSchema, async (v) => {
    switch (v.intent) {
      case "update":
        if (userId === me.user.id && !v.active)
          throw new UserError("You cannot deactivate your own account.", { field: "active" });
        await updateUser(userId, v);
        return "Saved.";
      case "add-role":
        return addAssignment(me.user, userId, v);
      case "remove-role":
        await removeAssignment(me.user, userId, v.assignmentId);
        return "Role removed.";
    }
  });
}

export default function AdminUser({ loaderData }: Route.ComponentProps) {
  const { user, sites, departments, own } = loaderData;
  const r = useActionData<typeof action>();
  return (
    <div className="grid gap-6">
      <div>
        <a href="/admin/users" className="text-sm text-spruce-700 underline">
          ← Users and roles
        </a>
        <h1 className="page-title mt-2">{user.displayName}</h1>
        <p className="text-ink-soft">{user.email}</p>
      </div>
      <ActionNotice result={r} />
      <section className="card" aria-labelledby="details">
        <h2 id="details" className="text-lg font-semibold">
          Details
        </h2>
        <ActionForm intent="update" result={r} className="mt-3 grid gap-4 sm:grid-cols-2">
          <TextField name="displayName" label="Name" required defaultValue={user.displayName} />
          <div className="self-end pb-2">
            <CheckboxField name="active" label="Active (may sign in)" defaultChecked={user.active} />
          </div>
          <div className="sm:col-span-2">
            <button type="submit" className="btn-primary">
              Save details
            </button>
          </div>
        </ActionForm>
      </section>
      <section className="card" aria-labelledby="roles">
        <h2 id="roles" className="text-lg font-semibold">
          Role assignments
        </h2>
        <ActionErrors result={r} intent="remove-role" />
        {own && <p className="mt-2 text-ink-soft">These are your own roles: another admin must change them.</p>}
        <ul className="mt-3 divide-y divide-line">
          {user.assignments.length === 0 && user.pending.length === 0 && (
            <li className="py-2 text-ink-soft">No roles: this person cannot sign in.</li>
          )}
          {user.pending.map((p) => (
            <li key={`pending-${p.id}`} className="py-2 text-ink-soft">
              Waiting for a second admin: {p.subject} (asked by {p.requestedBy}) —{" "}
              <a href="/admin/approvals" className="text-spruce-700 underline">
                approvals
              </a>
            </li>
          ))}
          {user.assignments.map((a) => (
            <li key={a.id} className="flex flex-wrap items-center justify-between gap-2 py-2">
              <span>
                <strong>{ROLE_LABELS[a.role]}</strong> · {a.scope}
              </span>
              <Form method="post" hidden={own}>
                <input type="hidden" name="intent" value="remove-role" />
                <input type="hidden" name="assignmentId" value={a.id} />
                <button
                  type="submit"
                  className="btn-quiet"
                  aria-label={`Remove ${ROLE_LABELS[a.role]} role for ${a.scope}`}
                >
                  Remove
                </button>
              </Form>
            </li>
          ))}
        </ul>
        <ActionForm intent="add-role" result={r} className="mt-4 grid gap-4 sm:grid-cols-3" hidden={own}>
          <SelectField
            name="role"
            label="Role"
            required
            options={ROLES.map((x) => ({ value: x, label: ROLE_LABELS[x] }))}
          />
          <SelectField name="siteId" label="Site" options={siteOptions(sites)} />
          <SelectField name="departmentId" label="Department" options={departmentOptions(departments)} />
          <div className="sm:col-span-3">
            <button type="submit" className="btn-primary">
              Add role
            </button>
          </div>
        </ActionForm>
      </section>
    </div>
  );
}
