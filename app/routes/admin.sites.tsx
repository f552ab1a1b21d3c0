import { Link, useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionForm, ActionNotice, SelectField, TextField } from "~/components/fields";
import { siteOptions } from "~/components/scope-options";
import { timeZoneNames } from "~/dates";
import { notFound } from "~/errors";
import { formAction } from "~/forms.server";
import {
  createDepartment,
  createSite,
  departmentHeadcounts,
  setOrganisationTimeZone,
  setSiteTimeZone,
} from "~/models/org.server";
import { listDepartments, listSites, organisationTimeZone } from "~/models/sites.server";
import { sitesFormSchema } from "~/schemas/admin";
import type { Route } from "./+types/admin.sites";

export const meta: Route.MetaFunction = () => [{ title: "Sites and departments · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "admin.sites");
  const [sites, departments, headcounts, defaultZone] = await Promise.all([
    listSites(),
    listDepartments(),
    departmentHeadcounts(),
    organisationTimeZone(),
  ]);
  return { sites, departments, headcounts, defaultZone, zones: timeZoneNames() };
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, "admin.sites");
  return formAction(await request.formData(), sitesFormSchema, async (v) => {
    switch (v.intent) {
      case "site":
        await createSite(v);
        return "Site added.";
      case "department":
        await createDepartment(v);
        return "Department added.";
      case "siteZone":
        if (!(await setSiteTimeZone(v.siteId, v.timeZone))) throw notFound("That site does not exist.", "timeZone");
        return `Time zone set to ${v.timeZone}.`;
      case "orgZone":
        await setOrganisationTimeZone(v.timeZone);
        return `New sites start with ${v.timeZone}.`;
    }
  });
}

export default function AdminSites({ loaderData }: Route.ComponentProps) {
  const { sites, departments, headcounts, defaultZone, zones } = loaderData;
  const r = useActionData<typeof action>();
  return (
    <div className="grid gap-6">
      <h1 className="page-title">Sites and departments</h1>
      <ActionNotice result={r} />
      <datalist id="time-zones">
        {zones.map((z) => (
          <option key={z} value={z} />
        ))}
      </datalist>
      <div className="grid gap-4 md:grid-cols-3">
        {sites.map((s) => (
          <section key={s.id} className="card" aria-labelledby={`site-${s.id}`}>
            <h2 id={`site-${s.id}`} className="font-semibold">
              {s.name} <span className="text-sm text-ink-soft">({s.code})</span>
            </h2>
            <p className="text-sm">
              <Link className="text-spruce-700 underline" to={`/admin/sites/${s.id}/calendar`}>
                Working hours and closures
              </Link>
            </p>
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
            <ActionForm
              intent="siteZone"
              match={{ siteId: String(s.id) }}
              result={r}
              className="mt-3 flex flex-wrap items-end gap-2"
            >
              <input type="hidden" name="siteId" value={s.id} />
              <ZoneInput label={`Time zone of ${s.name}`} defaultValue={s.timeZone} />
              <button type="submit" className="btn-quiet">
                Save zone
              </button>
            </ActionForm>
          </section>
        ))}
      </div>
      <section className="card max-w-xl" aria-labelledby="org-zone">
        <h2 id="org-zone" className="text-lg font-semibold">
          Default time zone for new sites
        </h2>
        <p className="mt-1 text-sm text-ink-soft">
          Session times are the site's wall-clock times: shown, exported and compared (today, this week) in the site's
          zone. Sign-ins and access-log times are shown in the viewer's site zone, named beside the time.
        </p>
        <ActionForm intent="orgZone" result={r} className="mt-3 flex flex-wrap items-end gap-2">
          <ZoneInput label="Default time zone" defaultValue={defaultZone} />
          <button type="submit" className="btn-quiet">
            Save default
          </button>
        </ActionForm>
      </section>
      <div className="grid gap-4 md:grid-cols-2">
        <section className="card" aria-labelledby="add-site">
          <h2 id="add-site" className="text-lg font-semibold">
            Add a site
          </h2>
          <ActionForm intent="site" result={r} className="mt-3 grid gap-3">
            <TextField name="code" label="Code" required />
            <TextField name="name" label="Name" required />
            <ZoneInput label="Time zone" defaultValue={defaultZone} optional />
            <button type="submit" className="btn-primary justify-self-start">
              Add site
            </button>
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
            <button type="submit" className="btn-primary justify-self-start">
              Add department
            </button>
          </ActionForm>
        </section>
      </div>
    </div>
  );
}

/** An IANA zone name, typed or picked from the shared list; the server checks it against the same list. */
function ZoneInput({
  label,
  defaultValue,
  optional = false,
}: {
  label: string;
  defaultValue: string;
  /** A new site may leave it empty and take the organisation's default. */
  optional?: boolean;
}) {
  return (
    <div className="grow">
      <TextField
        name="timeZone"
        label={label}
        list="time-zones"
        defaultValue={defaultValue}
        required={!optional}
        hint={optional ? "Leave empty to use the organisation's default time zone." : undefined}
        autoComplete="off"
      />
    </div>
  );
}
