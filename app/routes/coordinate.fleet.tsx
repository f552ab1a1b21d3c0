import { Form, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { ActionErrors, ActionForm, ActionNotice, SelectField, TextArea, TextField } from "~/components/fields";
import { formAction } from "~/forms.server";
import {
  addMaintenance,
  fleetAdminView,
  removeMaintenance,
  updateDeviceType,
  updateUnit,
} from "~/models/fleet-admin.server";
import { fleetPageSchema } from "~/schemas/allocation";
import type { Route } from "./+types/coordinate.fleet";

export const meta: Route.MetaFunction = () => [{ title: "Fleet · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "fleet.manage");
  return { types: await fleetAdminView(p.scope) };
}

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "fleet.manage");
  return formAction(await request.formData(), fleetPageSchema, async (v) => {
    switch (v.intent) {
      case "device-type":
        await updateDeviceType(p, v.deviceTypeId, v);
        return "Device type saved.";
      case "unit":
        await updateUnit(p, v.unitId, v);
        return "Unit saved.";
      case "add-maintenance":
        await addMaintenance(p, v.unitId, v);
        return "Maintenance window added.";
      case "remove-maintenance":
        await removeMaintenance(p, v.id);
        return "Maintenance window removed.";
    }
  });
}

const STATUS_LABEL = { in_service: "In service", maintenance: "In maintenance", retired: "Retired" } as const;

export default function Fleet({ loaderData, actionData }: Route.ComponentProps) {
  const { types } = loaderData;
  const nav = useNavigation();
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">Fleet</h1>
        <p className="text-ink-soft">
          Device types with their fit rules and limits, and the units at your sites. Bookable hours per week are what
          the allocator may plan: each unit in service contributes its bookable hours, less the working days it is in a
          maintenance window.
        </p>
      </div>
      <ActionErrors result={actionData} intent="remove-maintenance" />
      <ActionNotice result={actionData} intent="remove-maintenance" />
      {types.map((t) => {
        return (
          <section key={t.id} aria-labelledby={`dt-${t.id}`} className="card grid gap-4">
            <div>
              <h2 id={`dt-${t.id}`} className="text-lg font-semibold">
                {t.name}
              </h2>
              <p className="text-sm text-ink-soft">{t.description}</p>
              <p className="mt-1 text-sm">
                <strong>{t.units.filter((u) => u.status === "in_service").length}</strong> units in service at your
                sites · <strong>{t.bookableHoursPerWeek} h</strong> bookable per week before maintenance
              </p>
            </div>
            <ActionForm
              intent="device-type"
              match={{ deviceTypeId: String(t.id) }}
              result={actionData}
              notice
              className="grid gap-3 md:grid-cols-3"
            >
              <input type="hidden" name="deviceTypeId" value={t.id} />
              <TextField
                name="wearTimeLimitMinutes"
                label="Wear-time limit (min per session)"
                type="number"
                step="1"
                defaultValue={String(t.wearTimeLimitMinutes)}
              />
              <TextField
                name="minSessionMinutes"
                label="Shortest session (min)"
                type="number"
                step="1"
                defaultValue={String(t.minSessionMinutes)}
              />
              <TextField
                name="maxSessionMinutes"
                label="Longest session (min)"
                type="number"
                step="1"
                defaultValue={String(t.maxSessionMinutes)}
                hint="At most the wear-time limit."
              />
              <TextField
                name="defaultMaxHoursPerWeek"
                label="Default max hours per week"
                type="number"
                step="0.5"
                defaultValue={String(t.defaultMaxHoursPerWeek)}
              />
              <div className="md:col-span-2">
                <TextArea name="fitRules" label="Fit rules" rows={2} defaultValue={t.fitRules ?? ""} />
              </div>
              <div className="md:col-span-3 flex flex-wrap items-center gap-3">
                <button className="btn-quiet" type="submit" disabled={nav.state === "submitting"}>
                  Save {t.name}
                </button>
              </div>
            </ActionForm>
            <section className="overflow-x-auto" tabIndex={0} aria-label={`${t.name} units (scrolls sideways)`}>
              <table className="table-base">
                <caption className="sr-only">{t.name} units</caption>
                <thead>
                  <tr>
                    <th scope="col">Unit</th>
                    <th scope="col">Site</th>
                    <th scope="col">Status and bookable hours</th>
                    <th scope="col">Maintenance windows</th>
                  </tr>
                </thead>
                <tbody>
                  {t.units.map((u) => {
                    return (
                      <tr key={u.id}>
                        <th scope="row" className="whitespace-nowrap">
                          {u.serial}
                        </th>
                        <td>{u.site}</td>
                        <td>
                          <ActionForm
                            intent="unit"
                            match={{ unitId: String(u.id) }}
                            result={actionData}
                            notice
                            className="flex flex-wrap items-end gap-2"
                          >
                            <input type="hidden" name="unitId" value={u.id} />
                            <SelectField
                              name="status"
                              label="Status"
                              defaultValue={u.status}
                              options={Object.entries(STATUS_LABEL).map(([value, label]) => ({ value, label }))}
                            />
                            <TextField
                              name="bookableHoursPerWeek"
                              label="Bookable h/week"
                              type="number"
                              step="0.5"
                              defaultValue={String(u.bookableHoursPerWeek)}
                            />
                            <button className="btn-quiet" type="submit" aria-label={`Save unit ${u.serial}`}>
                              Save
                            </button>
                          </ActionForm>
                        </td>
                        <td>
                          <ul className="grid gap-1 text-sm">
                            {u.maintenance.map((m) => (
                              <li key={m.id} className="flex flex-wrap items-center gap-2">
                                <span>
                                  {m.startsOn} – {m.endsOn}
                                  {m.reason ? `: ${m.reason}` : ""}
                                </span>
                                <Form method="post">
                                  <input type="hidden" name="intent" value="remove-maintenance" />
                                  <input type="hidden" name="id" value={m.id} />
                                  <button
                                    className="text-sm text-alert underline"
                                    type="submit"
                                    aria-label={`Remove maintenance ${m.startsOn} to ${m.endsOn} of ${u.serial}`}
                                  >
                                    Remove
                                  </button>
                                </Form>
                              </li>
                            ))}
                          </ul>
                          <details className="mt-1">
                            <summary className="cursor-pointer text-sm text-spruce-700">
                              Add a maintenance window
                            </summary>
                            <ActionForm
                              intent="add-maintenance"
                              match={{ unitId: String(u.id) }}
                              result={actionData}
                              notice
                              className="mt-2 grid gap-2"
                            >
                              <input type="hidden" name="unitId" value={u.id} />
                              <TextField name="startsOn" label="From" type="date" />
                              <TextField name="endsOn" label="To (inclusive)" type="date" />
                              <TextField name="reason" label="Reason" />
                              <button className="btn-quiet" type="submit">
                                Add window to {u.serial}
                              </button>
                            </ActionForm>
                          </details>
                        </td>
                      </tr>
                    );
                  })}
                </tbody>
              </table>
            </section>
          </section>
        );
      })}
      <DeviceCautions />
    </div>
  );
}
