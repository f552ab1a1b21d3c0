import { invariantResponse } from "@epic-web/invariant";
import { Form, Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { countUpload } from "~/auth/throttle.server";
import { ActionErrors, ActionForm, ActionNotice, TextField } from "~/components/fields";
import { FileField } from "~/components/upload";
import { WEEKDAY_NAMES } from "~/compute/plan-calendar";
import { addDays, todayIn } from "~/dates";
import { UserError } from "~/errors";
import { answerUserErrors, formAction } from "~/forms.server";
import { keepRetryAfter } from "~/http/headers";
import {
  addClosure,
  clearWorkingHours,
  importClosures,
  removeClosure,
  setWorkingHours,
  siteCalendarView,
} from "~/models/site-calendar.server";
import { readMultipart, type UploadedFile } from "~/models/uploads.server";
import { MAX_ICS_BYTES, siteCalendarFormSchema, workingDaysOf } from "~/schemas/admin";
import type { Route } from "./+types/admin.sites.$siteId.calendar";

export const meta: Route.MetaFunction = () => [{ title: "Working hours and closures · Limberly" }];

/** Recurring closures in an imported calendar are expanded this many years ahead. */
const IMPORT_YEARS = 3;

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, "admin.sites");
  const id = Number(params.siteId);
  invariantResponse(Number.isInteger(id) && id > 0, "No such site.", { status: 404 });
  return answerUserErrors(() => siteCalendarView(id));
}

// A refused upload (429) keeps its Retry-After on the `.data` answer.
export const headers = keepRetryAfter;

export async function action({ request, params }: Route.ActionArgs) {
  const p = await requireUser(request, "admin.sites");
  const siteId = Number(params.siteId);
  await countUpload(request, p.user.id);
  let form: FormData;
  let file: UploadedFile | null = null;
  try {
    ({ form, file } = await readMultipart(request, { fileField: "ics", maxBytes: MAX_ICS_BYTES }));
  } catch (e) {
    // too large or unreadable: answered on the import form's file field, nothing saved
    if (!(e instanceof UserError)) throw e;
    const refused = new FormData();
    refused.set("intent", "import-ics");
    return formAction(refused, siteCalendarFormSchema, async () => {
      throw new UserError(`Calendar file: ${e.message}`, { status: e.status, field: "ics" });
    });
  }
  return formAction(form, siteCalendarFormSchema, async (v) => {
    switch (v.intent) {
      case "hours":
        await setWorkingHours(siteId, workingDaysOf(v));
        return "Working hours saved. New runs plan with them.";
      case "clear-hours":
        await clearWorkingHours(siteId);
        return "Working hours taken away: the site works Monday to Friday inside the trainers' own hours.";
      case "closure":
        return (await addClosure(p, siteId, v))
          ? `Closure ${v.startsOn} to ${v.endsOn} added.`
          : "That closure is already on file.";
      case "remove-closure":
        await removeClosure(siteId, v.id);
        return "Closure removed.";
      case "import-ics": {
        if (!file || file.size === 0)
          throw new UserError("Calendar file: choose an .ics file (the file was empty or missing).", { field: "ics" });
        if (!/\.ics$/i.test(file.name))
          throw new UserError(`Calendar file: ${file.name} is not an .ics file.`, { field: "ics" });
        let text: string;
        try {
          text = new TextDecoder("utf-8", { fatal: true }).decode(file.bytes);
        } catch {
          throw new UserError("Calendar file: it is not UTF-8 text (RFC 5545 calendars are).", { field: "ics" });
        }
        const { site } = await siteCalendarView(siteId);
        const from = todayIn(site.timeZone);
        const r = await importClosures(p, siteId, text, { from, to: addDays(from, IMPORT_YEARS * 365) });
        return [
          `${r.added} closure${r.added === 1 ? "" : "s"} imported from ${file.name}.`,
          r.known ? `${r.known} already on file.` : "",
          r.skippedTimed
            ? `${r.skippedTimed} event${r.skippedTimed === 1 ? "" : "s"} with a time of day skipped (a closure is whole days).`
            : "",
        ]
          .filter(Boolean)
          .join(" ");
      }
    }
  });
}

export default function SiteCalendar({ loaderData, actionData }: Route.ComponentProps) {
  const { site, hours, closures } = loaderData;
  const byDay = new Map(hours.map((h) => [h.weekday, h]));
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link className="text-spruce-700 underline" to="/admin/sites">
            Sites and departments
          </Link>
        </p>
        <h1 className="page-title">Working hours and closures of {site.name}</h1>
        <p className="text-ink-soft">
          The allocator plans sessions only inside these hours (times on the site's clock, {site.timeZone}) and never on
          a closure day; the weekly capacities it plans against leave the closed days out. Changes apply to new runs; a
          run computed before a change cannot be published.
        </p>
      </div>
      <section aria-labelledby="hours" className="card grid gap-3">
        <h2 id="hours" className="text-lg font-semibold">
          Working hours
        </h2>
        <p className="text-sm text-ink-soft">
          {hours.length
            ? "Leave a weekday empty when the site does not work that day."
            : "None on file: the site works Monday to Friday, inside the trainers' own hours."}
        </p>
        <ActionForm intent="hours" result={actionData} notice className="grid gap-3">
          <div className="grid gap-3 sm:grid-cols-2 xl:grid-cols-3">
            {[1, 2, 3, 4, 5, 6, 7].map((d) => (
              <fieldset key={d} className="grid grid-cols-2 gap-2">
                <legend className="field-label">{WEEKDAY_NAMES[d]}</legend>
                <TextField name={`start${d}`} label="Opens" type="time" defaultValue={byDay.get(d)?.start ?? ""} />
                <TextField name={`end${d}`} label="Closes" type="time" defaultValue={byDay.get(d)?.end ?? ""} />
              </fieldset>
            ))}
          </div>
          <div>
            <button className="btn-primary" type="submit">
              Save working hours
            </button>
          </div>
        </ActionForm>
        {hours.length > 0 && (
          <Form method="post">
            <input type="hidden" name="intent" value="clear-hours" />
            <button className="btn-quiet" type="submit">
              Take the working hours away
            </button>
          </Form>
        )}
        <ActionNotice result={actionData} intent="clear-hours" />
      </section>
      <section aria-labelledby="closures" className="card grid gap-3">
        <h2 id="closures" className="text-lg font-semibold">
          Closures
        </h2>
        <ActionErrors result={actionData} intent="remove-closure" />
        <ActionNotice result={actionData} intent="remove-closure" />
        {closures.length === 0 ? (
          <p className="text-ink-soft">No closures on file.</p>
        ) : (
          <section className="overflow-x-auto" tabIndex={0} aria-label="Closures (scrolls sideways)">
            <table className="table-base">
              <caption className="sr-only">Closures of {site.name}</caption>
              <thead>
                <tr>
                  <th scope="col">Days</th>
                  <th scope="col">Reason</th>
                  <th scope="col" className="hidden sm:table-cell">
                    From
                  </th>
                  <th scope="col">
                    <span className="sr-only">Remove</span>
                  </th>
                </tr>
              </thead>
              <tbody>
                {closures.map((c) => (
                  <tr key={c.id}>
                    <td>
                      <span className="whitespace-nowrap">{c.startsOn}</span>
                      {c.endsOn !== c.startsOn && (
                        <>
                          {" – "}
                          <span className="whitespace-nowrap">{c.endsOn}</span>
                        </>
                      )}
                    </td>
                    <td>{c.reason}</td>
                    <td className="hidden sm:table-cell">{c.source === "ics" ? "calendar file" : "typed in"}</td>
                    <td>
                      <Form method="post">
                        <input type="hidden" name="intent" value="remove-closure" />
                        <input type="hidden" name="id" value={c.id} />
                        <button
                          className="text-sm text-alert underline"
                          type="submit"
                          aria-label={`Remove the closure ${c.startsOn} to ${c.endsOn}`}
                        >
                          Remove
                        </button>
                      </Form>
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </section>
        )}
        <div className="grid gap-4 md:grid-cols-2">
          <ActionForm intent="closure" result={actionData} notice className="grid gap-3">
            <h3 className="font-semibold">Add a closure</h3>
            <TextField name="startsOn" label="First day" type="date" required />
            <TextField name="endsOn" label="Last day (inclusive)" type="date" required />
            <TextField name="reason" label="Reason" required hint="For example: Christmas Day, summer shutdown." />
            <div>
              <button className="btn-quiet" type="submit">
                Add closure
              </button>
            </div>
          </ActionForm>
          <ActionForm
            intent="import-ics"
            result={actionData}
            notice
            encType="multipart/form-data"
            className="grid gap-3"
          >
            <h3 className="font-semibold">Import from a calendar file</h3>
            <p className="text-sm text-ink-soft">
              Every all-day event becomes a closure of the days it covers; yearly holidays are repeated for the next{" "}
              {IMPORT_YEARS} years. Events with a time of day are skipped. Closures already on file are not added twice.
            </p>
            <FileField
              name="ics"
              label="Calendar file"
              accept=".ics"
              maxBytes={MAX_ICS_BYTES}
              required
              error={actionData?.intent === "import-ics" ? actionData.result.error?.ics?.[0] : undefined}
            />
            <div>
              <button className="btn-quiet" type="submit">
                Import closures
              </button>
            </div>
          </ActionForm>
        </div>
      </section>
    </div>
  );
}
