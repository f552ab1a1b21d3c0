import { data, Form, useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ROLE_LABELS, ROLES } from "~/auth/permissions";
import { FormError, Notice, SelectField, TextField } from "~/components/fields";
import { departmentOptions, siteOptions } from "~/components/scope-options";
import { addAssignment, removeAssignment, updateUser, userDetail } from "~/models/admin-users.server";
import { listDepartments, listSites } from "~/models/sites.server";
import { roleAssignmentSchema, updateUserSchema } from "~/schemas/admin";
import { formToObject, parseWith } from "~/schemas/form";
import type { Route } from "./+types/admin.users.$userId";

export const meta: Route.MetaFunction = () => [{ title: "User · Limberly" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, "admin.users");
  const user = await userDetail(Number(params.userId));
  if (!user) throw data({ error: "No such user." }, { status: 404 });
  const [sites, departments] = await Promise.all([listSites(), listDepartments()]);
  return { user, sites, departments };
}

export async function action({ request, params }: Route.ActionArgs) {
  const me = await requireUser(request, "admin.users");
  const userId = Number(params.userId);
  if (!(await userDetail(userId))) throw data({ error: "No such user." }, { status: 404 });
  const form = formToObject(await request.formData());
  if (form.intent === "update") {
    const p = parseWith(updateUserSchema, form);
    if (!p.ok) return data({ intent: "update", errors: p.errors, done: null }, { status: 400 });
    if (userId === me.user.id && !p.data.active)
      return data(
        { intent: "update", errors: { active: "You cannot deactivate your own account." }, done: null },
        { status: 400 },
      );
    await updateUser(userId, p.data);
    return { intent: "update", errors: null, done: "Saved." };
  }
  if (form.intent === "add-role") {
    const p = parseWith(roleAssignmentSchema, form);
    if (!p.ok) return data({ intent: "add-role", errors: p.errors, done: null }, { status: 400 });
    await addAssignment(userId, p.data);
    return { intent: "add-role", errors: null, done: "Role added." };
  }
  if (form.intent === "remove-role") {
    const removed = await removeAssignment(userId, Number(form.assignmentId));
    return removed
      ? { intent: "remove-role", errors: null, done: "Role removed." }
      : data(
          { intent: "remove-role", errors: { _form: "That role assignment no longer exists." }, done: null },
          { status: 404 },
        );
  }
  return data({ intent: "", errors: { _form: "Unknown action." }, done: null }, { status: 400 });
}

export default function AdminUser({ loaderData }: Route.ComponentProps) {
  const { user, sites, departments } = loaderData;
  const r = useActionData<typeof action>();
  const errs = (intent: string) => (r?.intent === intent ? (r.errors ?? {}) : {}) as Record<string, string>;
  return (
    <div className="grid gap-6">
      <div>
        <a href="/admin/users" className="text-sm text-spruce-700 underline">
          ← Users and roles
        </a>
        <h1 className="page-title mt-2">{user.displayName}</h1>
        <p className="text-ink-soft">{user.email}</p>
      </div>
      {r?.done && <Notice>{r.done}</Notice>}
      <section className="card" aria-labelledby="details">
        <h2 id="details" className="text-lg font-semibold">
          Details
        </h2>
        <Form method="post" className="mt-3 grid gap-4 sm:grid-cols-2">
          <input type="hidden" name="intent" value="update" />
          <TextField
            name="displayName"
            label="Name"
            required
            defaultValue={user.displayName}
            error={errs("update").displayName}
          />
          <div className="flex items-center gap-2 self-end pb-2">
            <input
              id="active"
              name="active"
              type="checkbox"
              defaultChecked={user.active}
              className="size-5"
              aria-describedby={errs("update").active ? "active-error" : undefined}
            />
            <label htmlFor="active" className="field-label">
              Active (may sign in)
            </label>
          </div>
          {errs("update").active && (
            <p id="active-error" className="field-error sm:col-span-2">
              {errs("update").active}
            </p>
          )}
          <div className="sm:col-span-2">
            <button type="submit" className="btn-primary">
              Save details
            </button>
          </div>
        </Form>
      </section>
      <section className="card" aria-labelledby="roles">
        <h2 id="roles" className="text-lg font-semibold">
          Role assignments
        </h2>
        <FormError message={errs("remove-role")._form} />
        <ul className="mt-3 divide-y divide-line">
          {user.assignments.length === 0 && (
            <li className="py-2 text-ink-soft">No roles: this person cannot sign in.</li>
          )}
          {user.assignments.map((a) => (
            <li key={a.id} className="flex flex-wrap items-center justify-between gap-2 py-2">
              <span>
                <strong>{ROLE_LABELS[a.role]}</strong> · {a.scope}
              </span>
              <Form method="post">
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
        <Form method="post" className="mt-4 grid gap-4 sm:grid-cols-3">
          <input type="hidden" name="intent" value="add-role" />
          <SelectField
            name="role"
            label="Role"
            required
            error={errs("add-role").role}
            options={ROLES.map((x) => ({ value: x, label: ROLE_LABELS[x] }))}
          />
          <SelectField name="siteId" label="Site" error={errs("add-role").siteId} options={siteOptions(sites)} />
          <SelectField
            name="departmentId"
            label="Department"
            error={errs("add-role").departmentId}
            options={departmentOptions(departments)}
          />
          <div className="sm:col-span-3">
            <button type="submit" className="btn-primary">
              Add role
            </button>
          </div>
        </Form>
      </section>
    </div>
  );
}
