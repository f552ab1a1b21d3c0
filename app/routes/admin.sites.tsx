import { useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionForm, ActionNotice, SelectField, TextField } from "~/components/fields";
import { siteOptions } from "~/components/scope-options";
import { formAction } from "~/forms.server";
import { createDepartment, createSite, departmentHeadcounts } from "~/models/org.server";
import { listDepartments, listSites } from "~/models/sites.server";
import { sitesFormSchema } from "~/schemas/admin";
import type { Route } from "./+types/admin.sites";

export const meta: Route.MetaFunction = () => [{ title: "Sites and departments · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "admin.sites");
  const [sites, departments, headcounts] = await Promise.all([listSites(), listDepartments(), departmentHeadcounts()]);
  return { sites, departments, headcounts };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, "admin.sites");
  return formAction(await request.formData(), sitesFormSchema, async (v) => {
    if (v.intent === "site") {
      await createSite(v);
      return "Site added.";
    }
    await createDepartment(v);
    return "Department added.";
  });
}

export default function AdminSites({ loaderData }: Route.ComponentProps) {
  const { sites, departments, headcounts } = loaderData;
  const r = useActionData<typeof action>();
  return (
    <div className="grid gap-6">
      <h1 className="page-title">Sites and departments</h1>
      <ActionNotice result={r} />
      <div className="grid gap-4 md:grid-cols-3">
        {sites.map((s) => (
          <section key={s.id} className="card" aria-labelledby={`site-${s.id}`}>
            <h2 id={`site-${s.id}`} className="font-semibold">
              {s.name} <span className="text-sm text-ink-soft">({s.code})</span>
            </h2>
            <ul className="mt-2 text-sm">
              {departments
                .filter((d) => d.siteId === s.id)
                .map((d) => (
                  <li key={d.id} className="flex justify-between border-b border-line py-1">
                    <span>
                      {d.name} ({d.code})
                    </span>
                    <span className="text-ink-soft">{headcounts[d.id] ?? 0} workers</span>
                  </li>
                ))}
            </ul>
          </section>
        ))}
      </div>
      <div className="grid gap-4 md:grid-cols-2">
        <section className="card" aria-labelledby="add-site">
          <h2 id="add-site" className="text-lg font-semibold">
            Add a site
          </h2>
          <ActionForm intent="site" result={r} className="mt-3 grid gap-3">
            <TextField name="code" label="Code" required />
            <TextField name="name" label="Name" required />
            <button className="btn-primary justify-self-start">Add site</button>
          </ActionForm>
        </section>
        <section className="card" aria-labelledby="add-dept">
          <h2 id="add-dept" className="text-lg font-semibold">
            Add a department
          </h2>
          <ActionForm intent="department" result={r} className="mt-3 grid gap-3">
            <SelectField name="siteId" label="Site" required options={siteOptions(sites)} />
            <TextField name="code" label="Code" required />
            <TextField name="name" label="Name" required />
            <button className="btn-primary justify-self-start">Add department</button>
          </ActionForm>
        </section>
      </div>
    </div>
  );
}
