import type { ColumnDef } from "@tanstack/react-table";
import { Link, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ROLE_LABELS, ROLES } from "~/auth/permissions";
import { ActionForm, ActionNotice, SelectField, TextField } from "~/components/fields";
import { departmentOptions, siteOptions } from "~/components/scope-options";
import { ServerTable } from "~/components/server-table";
import { formatInstant } from "~/dates";
import { answerUserErrors, formAction } from "~/forms.server";
import { createUser, listUsers, type UserListRow } from "~/models/admin-users.server";
import { listDepartments, listSites, viewerTimeZone } from "~/models/sites.server";
import { createUserSchema } from "~/schemas/admin";
import { readTableQuery } from "~/schemas/table-query";
import type { Route } from "./+types/admin.users";

export const meta: Route.MetaFunction = () => [{ title: "Users and roles · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  return answerUserErrors(async () => {
    const p = await requireUser(request, "admin.users");
    const q = readTableQuery(new URL(request.url));
    const [page, sites, departments, timeZone] = await Promise.all([
      listUsers(q),
      listSites(),
      listDepartments(),
      viewerTimeZone(p),
    ]);
    return { page, q: q.q ?? "", sites, departments, timeZone };
  });
}

export async function action({ request }: Route.ActionArgs) {
  const me = await requireUser(request, "admin.users");
  return formAction(await request.formData(), createUserSchema, async (v) => (await createUser(me.user, v)).notice);
}

const columnsIn = (zone: string): ColumnDef<UserListRow, unknown>[] => [
  {
    id: "name",
    header: "Name",
    cell: ({ row }) => (
      <Link className="font-medium text-spruce-700 underline" to={`/admin/users/${row.original.id}`}>
        {row.original.displayName}
      </Link>
    ),
  },
  { id: "email", header: "E-mail", cell: ({ row }) => row.original.email },
  { id: "roles", header: "Roles", cell: ({ row }) => row.original.roles || "—" },
  { id: "active", header: "Status", cell: ({ row }) => (row.original.active ? "Active" : "Deactivated") },
  {
    id: "lastSignIn",
    header: "Last sign-in",
    cell: ({ row }) => (row.original.lastSignInAt ? formatInstant(row.original.lastSignInAt, zone) : "never"),
  },
];

export default function AdminUsers({ loaderData }: Route.ComponentProps) {
  const { page, q, sites, departments, timeZone } = loaderData;
  const columns = columnsIn(timeZone);
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  return (
    <div className="grid gap-6">
      <h1 className="page-title">Users and roles</h1>
      <ServerTable
        caption="Users"
        columns={columns}
        rows={page.rows}
        total={page.total}
        page={page.page}
        size={page.size}
        sort={page.sort}
        dir={page.dir}
        sortable={["name", "email", "lastSignIn"]}
        searchLabel="Filter by name or e-mail"
        q={q}
      />
      <section className="card" aria-labelledby="add-user">
        <h2 id="add-user" className="text-lg font-semibold">
          Add a user
        </h2>
        <p className="text-sm text-ink-soft">The e-mail must match the person's identity at your identity provider.</p>
        {result?.notice && (
          <div className="mt-3">
            <ActionNotice result={result} />
          </div>
        )}
        <ActionForm result={result} className="mt-4 grid gap-4 sm:grid-cols-2">
          <TextField name="email" label="E-mail" type="email" required autoComplete="off" />
          <TextField name="displayName" label="Name" required />
          <SelectField
            name="role"
            label="Role"
            required
            options={ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }))}
          />
          <SelectField
            name="siteId"
            label="Site"
            options={siteOptions(sites)}
            hint="Scope of the role. Admin may be organisation-wide."
          />
          <SelectField
            name="departmentId"
            label="Department (narrower scope)"
            options={departmentOptions(departments)}
          />
          <div className="sm:col-span-2">
            <button type="submit" className="btn-primary" disabled={busy}>
              {busy ? "Adding…" : "Add user"}
            </button>
          </div>
        </ActionForm>
      </section>
    </div>
  );
}
