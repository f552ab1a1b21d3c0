import { data, Form, useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { Notice, SelectField, TextField } from "~/components/fields";
import { siteOptions } from "~/components/scope-options";
import { timeZoneNames } from "~/dates";
import {
  createDepartment,
  createSite,
  DuplicateCodeError,
  departmentHeadcounts,
  setOrganisationTimeZone,
  setSiteTimeZone,
} from "~/models/org.server";
import { listDepartments, listSites, organisationTimeZone } from "~/models/sites.server";
import { departmentSchema, organisationTimeZoneSchema, siteSchema, siteTimeZoneSchema } from "~/schemas/admin";
import { formToObject, parseWith } from "~/schemas/form";
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

const INTENTS = ["site", "department", "siteZone", "orgZone"] as const;
type Intent = (typeof INTENTS)[number];

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request, "admin.sites");
  const form = formToObject(await request.formData());
  const intent: Intent = INTENTS.find((i) => i === form.intent) ?? "site";
  // Per-site forms report their errors under their own site id.
  const key = intent === "siteZone" ? `siteZone-${form.siteId}` : intent;
  const fail = (errors: Record<string, string>, status = 400) => data({ intent: key, errors, done: null }, { status });
  if (intent === "siteZone") {
    const p = parseWith(siteTimeZoneSchema, form);
    if (!p.ok) return fail(p.errors);
    if (!(await setSiteTimeZone(p.data.siteId, p.data.timeZone)))
      return fail({ timeZone: "That site does not exist." }, 404);
    return { intent: key, errors: null, done: `Time zone set to ${p.data.timeZone}.` };
  }
  if (intent === "orgZone") {
    const p = parseWith(organisationTimeZoneSchema, form);
    if (!p.ok) return fail(p.errors);
    await setOrganisationTimeZone(p.data.timeZone);
    return { intent: key, errors: null, done: `New sites start with ${p.data.timeZone}.` };
  }
  const p = intent === "site" ? parseWith(siteSchema, form) : parseWith(departmentSchema, form);
  if (!p.ok) return fail(p.errors);
  try {
    if (intent === "site") await createSite(p.data as { code: string; name: string; timeZone?: string });
    else await createDepartment(p.data as { siteId: number; code: string; name: string });
    return { intent, errors: null, done: `${intent === "site" ? "Site" : "Department"} added.` };
  } catch (e) {
    if (e instanceof DuplicateCodeError)
      return data({ intent, errors: { code: e.message }, done: null }, { status: 409 });
    throw e;
  }
}

export default function AdminSites({ loaderData }: Route.ComponentProps) {
  const { sites, departments, headcounts, defaultZone, zones } = loaderData;
  const r = useActionData<typeof action>();
  const errs = (i: string) => (r?.intent === i ? (r.errors ?? {}) : {}) as Record<string, string>;
  return (
    <div className="grid gap-6">
      <h1 className="page-title">Sites and departments</h1>
      {r?.done && <Notice>{r.done}</Notice>}
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
            <Form method="post" className="mt-3 flex flex-wrap items-end gap-2">
              <input type="hidden" name="intent" value="siteZone" />
              <input type="hidden" name="siteId" value={s.id} />
              <ZoneInput
                id={`zone-${s.id}`}
                label={`Time zone of ${s.name}`}
                defaultValue={s.timeZone}
                error={errs(`siteZone-${s.id}`).timeZone}
              />
              <button type="submit" className="btn-quiet">
                Save zone
              </button>
            </Form>
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
        <Form method="post" className="mt-3 flex flex-wrap items-end gap-2">
          <input type="hidden" name="intent" value="orgZone" />
          <ZoneInput
            id="zone-org"
            label="Default time zone"
            defaultValue={defaultZone}
            error={errs("orgZone").timeZone}
          />
          <button type="submit" className="btn-quiet">
            Save default
          </button>
        </Form>
      </section>
      <div className="grid gap-4 md:grid-cols-2">
        <section className="card" aria-labelledby="add-site">
          <h2 id="add-site" className="text-lg font-semibold">
            Add a site
          </h2>
          <Form method="post" className="mt-3 grid gap-3">
            <input type="hidden" name="intent" value="site" />
            <TextField name="code" label="Code" required error={errs("site").code} />
            <TextField name="name" label="Name" required error={errs("site").name} />
            <ZoneInput id="zone-new" label="Time zone" defaultValue={defaultZone} error={errs("site").timeZone} />
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

/** An IANA zone name, typed or picked from the shared list; the server checks it against the same list. */
function ZoneInput({
  id,
  label,
  defaultValue,
  error,
}: {
  id: string;
  label: string;
  defaultValue: string;
  error?: string;
}) {
  return (
    <div className="grow">
      <label htmlFor={id} className="field-label">
        {label}
      </label>
      <input
        id={id}
        name="timeZone"
        list="time-zones"
        defaultValue={defaultValue}
        required
        autoComplete="off"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
        className="field-input"
      />
      {error && (
        <p id={`${id}-error`} className="field-error">
          {error}
        </p>
      )}
    </div>
  );
}
