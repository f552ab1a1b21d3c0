import { Form, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { FormError, Notice } from "~/components/fields";
import {
  addMaintenance,
  FleetError,
  fleetAdminView,
  removeMaintenance,
  updateDeviceType,
  updateUnit,
} from "~/models/fleet-admin.server";
import { deviceTypeFormSchema, maintenanceFormSchema, removeByIdSchema, unitFormSchema } from "~/schemas/allocation";
import { formToObject, parseWith } from "~/schemas/form";
import type { Route } from "./+types/coordinate.fleet";

export const meta: Route.MetaFunction = () => [{ title: "Fleet · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "fleet.manage");
  return { types: await fleetAdminView(p.scope) };
}

type Result = { ok?: string; errors?: Record<string, string>; target?: string };

export async function action({ request }: Route.ActionArgs): Promise<Result> {
  const p = await requireUser(request, "fleet.manage");
  const raw = formToObject(await request.formData());
  const intent = String(raw.intent ?? "");
  const target = `${intent}-${raw.deviceTypeId ?? raw.unitId ?? raw.id ?? ""}`;
  try {
    if (intent === "device-type") {
      const r = parseWith(deviceTypeFormSchema, raw);
      if (!r.ok) return { errors: r.errors, target };
      await updateDeviceType(p, r.data.deviceTypeId, r.data);
      return { ok: "Device type saved.", target };
    }
    if (intent === "unit") {
      const r = parseWith(unitFormSchema, raw);
      if (!r.ok) return { errors: r.errors, target };
      await updateUnit(p, r.data.unitId, r.data);
      return { ok: "Unit saved.", target };
    }
    if (intent === "add-maintenance") {
      const r = parseWith(maintenanceFormSchema, raw);
      if (!r.ok) return { errors: r.errors, target };
      await addMaintenance(p, r.data.unitId, r.data);
      return { ok: "Maintenance window added.", target };
    }
    if (intent === "remove-maintenance") {
      const r = parseWith(removeByIdSchema, raw);
      if (!r.ok) return { errors: r.errors, target };
      await removeMaintenance(p, r.data.id);
      return { ok: "Maintenance window removed.", target };
    }
    return { errors: { _form: "Unknown action." }, target };
  } catch (e) {
    if (e instanceof FleetError) return { errors: { _form: e.message }, target };
    throw e;
  }
}

const STATUS_LABEL = { in_service: "In service", maintenance: "In maintenance", retired: "Retired" } as const;

export default function Fleet({ loaderData, actionData }: Route.ComponentProps) {
  const { types } = loaderData;
  const nav = useNavigation();
  const err = (target: string, field: string) =>
    actionData?.target === target ? actionData.errors?.[field] : undefined;
  const msg = (target: string) => (actionData?.target === target ? actionData : undefined);
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
      {actionData?.target === "" && <FormError message={actionData.errors?._form} />}
      {types.map((t) => {
        const tk = `device-type-${t.id}`;
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
            <Form method="post" className="grid gap-3 md:grid-cols-4" noValidate>
              <input type="hidden" name="intent" value="device-type" />
              <input type="hidden" name="deviceTypeId" value={t.id} />
              <FieldNum
                id={`wear-${t.id}`}
                name="wearTimeLimitMinutes"
                label="Wear-time limit (min per session)"
                value={t.wearTimeLimitMinutes}
                error={err(tk, "wearTimeLimitMinutes")}
              />
              <FieldNum
                id={`maxh-${t.id}`}
                name="defaultMaxHoursPerWeek"
                label="Default max hours per week"
                value={t.defaultMaxHoursPerWeek}
                step="0.5"
                error={err(tk, "defaultMaxHoursPerWeek")}
              />
              <div className="md:col-span-2">
                <label htmlFor={`fit-${t.id}`} className="field-label">
                  Fit rules
                </label>
                <textarea
                  id={`fit-${t.id}`}
                  name="fitRules"
                  rows={2}
                  defaultValue={t.fitRules}
                  className="field-input"
                  aria-describedby={err(tk, "fitRules") ? `fit-${t.id}-error` : undefined}
                />
                {err(tk, "fitRules") && (
                  <p id={`fit-${t.id}-error`} className="field-error">
                    {err(tk, "fitRules")}
                  </p>
                )}
              </div>
              <div className="md:col-span-4 flex flex-wrap items-center gap-3">
                <button className="btn-quiet" type="submit" disabled={nav.state === "submitting"}>
                  Save {t.name}
                </button>
                {msg(tk)?.ok && <Notice>{msg(tk)!.ok}</Notice>}
                <FormError message={err(tk, "_form")} />
              </div>
            </Form>
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
                    const uk = `unit-${u.id}`;
                    const mk = `add-maintenance-${u.id}`;
                    return (
                      <tr key={u.id}>
                        <th scope="row" className="whitespace-nowrap">
                          {u.serial}
                        </th>
                        <td>{u.site}</td>
                        <td>
                          <Form method="post" className="flex flex-wrap items-end gap-2" noValidate>
                            <input type="hidden" name="intent" value="unit" />
                            <input type="hidden" name="unitId" value={u.id} />
                            <div>
                              <label htmlFor={`status-${u.id}`} className="field-label">
                                Status
                              </label>
                              <select
                                id={`status-${u.id}`}
                                name="status"
                                defaultValue={u.status}
                                className="field-input"
                              >
                                {Object.entries(STATUS_LABEL).map(([v, l]) => (
                                  <option key={v} value={v}>
                                    {l}
                                  </option>
                                ))}
                              </select>
                            </div>
                            <FieldNum
                              id={`book-${u.id}`}
                              name="bookableHoursPerWeek"
                              label="Bookable h/week"
                              value={u.bookableHoursPerWeek}
                              step="0.5"
                              error={err(uk, "bookableHoursPerWeek")}
                            />
                            <button className="btn-quiet" type="submit" aria-label={`Save unit ${u.serial}`}>
                              Save
                            </button>
                            {msg(uk)?.ok && (
                              <span role="status" className="text-sm text-spruce-800">
                                {msg(uk)!.ok}
                              </span>
                            )}
                            <FormError message={err(uk, "_form")} />
                          </Form>
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
                            <Form method="post" className="mt-2 grid gap-2" noValidate>
                              <input type="hidden" name="intent" value="add-maintenance" />
                              <input type="hidden" name="unitId" value={u.id} />
                              <DateField id={`ms-${u.id}`} name="startsOn" label="From" error={err(mk, "startsOn")} />
                              <DateField
                                id={`me-${u.id}`}
                                name="endsOn"
                                label="To (inclusive)"
                                error={err(mk, "endsOn")}
                              />
                              <div>
                                <label htmlFor={`mr-${u.id}`} className="field-label">
                                  Reason
                                </label>
                                <input id={`mr-${u.id}`} name="reason" className="field-input" />
                              </div>
                              <button className="btn-quiet" type="submit">
                                Add window to {u.serial}
                              </button>
                              {msg(mk)?.ok && (
                                <span role="status" className="text-sm text-spruce-800">
                                  {msg(mk)!.ok}
                                </span>
                              )}
                              <FormError message={err(mk, "_form")} />
                            </Form>
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

function FieldNum({
  id,
  name,
  label,
  value,
  error,
  step,
}: {
  id: string;
  name: string;
  label: string;
  value: number;
  error?: string;
  step?: string;
}) {
  return (
    <div>
      <label htmlFor={id} className="field-label">
        {label}
      </label>
      <input
        id={id}
        name={name}
        type="number"
        step={step ?? "1"}
        defaultValue={value}
        className="field-input"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
      />
      {error && (
        <p id={`${id}-error`} className="field-error">
          {error}
        </p>
      )}
    </div>
  );
}

function DateField({ id, name, label, error }: { id: string; name: string; label: string; error?: string }) {
  return (
    <div>
      <label htmlFor={id} className="field-label">
        {label}
      </label>
      <input
        id={id}
        name={name}
        type="date"
        className="field-input"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
      />
      {error && (
        <p id={`${id}-error`} className="field-error">
          {error}
        </p>
      )}
    </div>
  );
}
