import { data, Form, useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { Notice, SelectField, TextField } from "~/components/fields";
import { siteOptions } from "~/components/scope-options";
import { createDepartment, createSite, DuplicateCodeError, departmentHeadcounts } from "~/models/org.server";
import { listDepartments, listSites } from "~/models/sites.server";
import { departmentSchema, siteSchema } from "~/schemas/admin";
import { formToObject, parseWith } from "~/schemas/form";
import type { Route } from "./+types/admin.sites";

export const meta: Route.MetaFunction = () => [{ title: "Sites and departments · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "admin.sites");
  const [sites, departments, headcounts] = await Promise.all([listSites(), listDepartments(), departmentHeadcounts()]);
  return { sites, departments, headcounts };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, "admin.sites");
  const form = formToObject(await request.formData());
  const intent = form.intent === "department" ? "department" : "site";
  const p = intent === "site" ? parseWith(siteSchema, form) : parseWith(departmentSchema, form);
  if (!p.ok) return data({ intent, errors: p.errors, done: null }, { status: 400 });
  try {
    if (intent === "site") await createSite(p.data as { code: string; name: string });
    else await createDepartment(p.data as { siteId: number; code: string; name: string });
    return { intent, errors: null, done: `${intent === "site" ? "Site" : "Department"} added.` };
  } catch (e) {
    if (e instanceof DuplicateCodeError)
      return data({ intent, errors: { code: e.message }, done: null }, { status: 409 });
    throw e;
  }
}

export default function AdminSites({ loaderData }: Route.ComponentProps) {
  const { sites, departments, headcounts } = loaderData;
  const r = useActionData<typeof action>();
  const errs = (i: string) => (r?.intent === i ? (r.errors ?? {}) : {}) as Record<string, string>;
  return (
    <div className="grid gap-6">
      <h1 className="page-title">Sites and departments</h1>
      {r?.done && <Notice>{r.done}</Notice>}
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
          <Form method="post" className="mt-3 grid gap-3">
            <input type="hidden" name="intent" value="site" />
            <TextField name="code" label="Code" required error={errs("site").code} />
            <TextField name="name" label="Name" required error={errs("site").name} />
            <button type="submit" className="btn-primary justify-self-start">
              Add site
            </button>
          </Form>
        </section>
        <section className="card" aria-labelledby="add-dept">
          <h2 id="add-dept" className="text-lg font-semibold">
            Add a department
          </h2>
          <Form method="post" className="mt-3 grid gap-3">
            <input type="hidden" name="intent" value="department" />
            <SelectField
              name="siteId"
              label="Site"
              required
              error={errs("department").siteId}
              options={siteOptions(sites)}
            />
            <TextField name="code" label="Code" required error={errs("department").code} />
            <TextField name="name" label="Name" required error={errs("department").name} />
            <button type="submit" className="btn-primary justify-self-start">
              Add department
            </button>
          </Form>
        </section>
      </div>
    </div>
  );
}
