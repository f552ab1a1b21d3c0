import { data, Form, Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { FormError, Notice } from "~/components/fields";
import { WEEKDAY_NAMES } from "~/compute/plan-calendar";
import { planningChoices } from "~/models/fleet-admin.server";
import {
  addPattern,
  addTrainerLeave,
  removePattern,
  removeTrainerLeave,
  TrainingAdminError,
  trainerDetail,
  updateTrainer,
} from "~/models/trainers-admin.server";
import { leaveFormSchema, patternFormSchema, removeByIdSchema, trainerFormSchema } from "~/schemas/allocation";
import { formToObject, parseWith } from "~/schemas/form";
import type { Route } from "./+types/coordinate.trainers.$trainerId";

export const meta: Route.MetaFunction = () => [{ title: "Trainer · Limberly" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "fleet.manage");
  const trainer = await trainerDetail(p.scope, Number(params.trainerId));
  if (!trainer) throw data({ error: "No such trainer at your sites." }, { status: 404 });
  return { trainer, deviceTypes: (await planningChoices(p.scope)).deviceTypes };
}

type Result = { ok?: string; errors?: Record<string, string>; intent?: string };

export async function action({ request, params }: Route.ActionArgs): Promise<Result> {
  const p = await requireUser(request, "fleet.manage");
  const id = Number(params.trainerId);
  const raw = formToObject(await request.formData());
  const intent = String(raw.intent ?? "");
  try {
    if (intent === "trainer") {
      const r = parseWith(trainerFormSchema, raw);
      if (!r.ok) return { errors: r.errors, intent };
      await updateTrainer(p, id, r.data);
      return { ok: "Trainer saved.", intent };
    }
    if (intent === "add-pattern") {
      const r = parseWith(patternFormSchema, raw);
      if (!r.ok) return { errors: r.errors, intent };
      await addPattern(p, id, r.data);
      return { ok: "Working window added.", intent };
    }
    if (intent === "add-leave") {
      const r = parseWith(leaveFormSchema, raw);
      if (!r.ok) return { errors: r.errors, intent };
      await addTrainerLeave(p, id, r.data);
      return { ok: "Leave added.", intent };
    }
    if (intent === "remove-pattern" || intent === "remove-leave") {
      const r = parseWith(removeByIdSchema, raw);
      if (!r.ok) return { errors: r.errors, intent };
      if (intent === "remove-pattern") await removePattern(p, id, r.data.id);
      else await removeTrainerLeave(p, id, r.data.id);
      return { ok: "Removed.", intent };
    }
    return { errors: { _form: "Unknown action." }, intent };
  } catch (e) {
    if (e instanceof TrainingAdminError) return { errors: { _form: e.message }, intent };
    throw e;
  }
}

function Field({
  id,
  label,
  error,
  ...rest
}: { id: string; label: string; error?: string } & React.InputHTMLAttributes<HTMLInputElement>) {
  return (
    <div>
      <label htmlFor={id} className="field-label">
        {label}
      </label>
      <input
        id={id}
        className="field-input"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
        {...rest}
      />
      {error && (
        <p id={`${id}-error`} className="field-error">
          {error}
        </p>
      )}
    </div>
  );
}

export default function TrainerPage({ loaderData, actionData }: Route.ComponentProps) {
  const { trainer: t, deviceTypes } = loaderData;
  const e = (intent: string, f: string) => (actionData?.intent === intent ? actionData.errors?.[f] : undefined);
  const ok = (intent: string) => (actionData?.intent === intent ? actionData.ok : undefined);
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link className="text-spruce-700 underline" to="/coordinate/trainers">
            Trainers
          </Link>
        </p>
        <h1 className="page-title">{t.name}</h1>
        <p className="text-ink-soft">
          {t.site} · {t.email}
        </p>
      </div>
      <section aria-labelledby="basics" className="card grid gap-3">
        <h2 id="basics" className="text-lg font-semibold">
          Hours, group size and certifications
        </h2>
        <Form method="post" className="grid gap-3" noValidate>
          <input type="hidden" name="intent" value="trainer" />
          <div className="grid gap-3 md:grid-cols-2">
            <Field
              id="hoursPerWeek"
              name="hoursPerWeek"
              label="Hours per week (contracted)"
              type="number"
              step="0.5"
              defaultValue={t.hoursPerWeek}
              error={e("trainer", "hoursPerWeek")}
            />
            <Field
              id="traineesPerSession"
              name="traineesPerSession"
              label="Trainees per session"
              type="number"
              defaultValue={t.traineesPerSession}
              error={e("trainer", "traineesPerSession")}
            />
          </div>
          <fieldset>
            <legend className="field-label">Certified device types</legend>
            {deviceTypes.map((d) => (
              <label key={d.id} className="flex min-h-11 items-center gap-2">
                <input
                  type="checkbox"
                  name="deviceTypeIds"
                  value={d.id}
                  defaultChecked={t.certifications.some((c) => c.id === d.id)}
                  className="h-5 w-5"
                />{" "}
                {d.name}
              </label>
            ))}
          </fieldset>
          <div className="flex flex-wrap items-center gap-3">
            <button className="btn-quiet" type="submit">
              Save trainer
            </button>
            {ok("trainer") && <Notice>{ok("trainer")}</Notice>}
          </div>
          <FormError message={e("trainer", "_form")} />
        </Form>
      </section>
      <section aria-labelledby="pattern" className="card grid gap-3">
        <h2 id="pattern" className="text-lg font-semibold">
          Weekly working pattern
        </h2>
        {t.pattern.length === 0 ? (
          <p className="text-ink-soft">No working windows: the allocator gives this trainer no hours.</p>
        ) : (
          <ul className="grid gap-1">
            {t.pattern.map((p) => (
              <li key={p.id} className="flex flex-wrap items-center gap-2">
                <span>
                  {WEEKDAY_NAMES[p.weekday]} {p.start}–{p.end}
                </span>
                <Form method="post">
                  <input type="hidden" name="intent" value="remove-pattern" />
                  <input type="hidden" name="id" value={p.id} />
                  <button
                    className="text-sm text-alert underline"
                    type="submit"
                    aria-label={`Remove ${WEEKDAY_NAMES[p.weekday]} ${p.start} to ${p.end}`}
                  >
                    Remove
                  </button>
                </Form>
              </li>
            ))}
          </ul>
        )}
        <Form method="post" className="grid gap-3 md:grid-cols-4 md:items-end" noValidate>
          <input type="hidden" name="intent" value="add-pattern" />
          <div>
            <label htmlFor="weekday" className="field-label">
              Weekday
            </label>
            <select
              id="weekday"
              name="weekday"
              className="field-input"
              aria-describedby={e("add-pattern", "weekday") ? "weekday-error" : undefined}
            >
              {WEEKDAY_NAMES.slice(1).map((n, i) => (
                <option key={n} value={i + 1}>
                  {n}
                </option>
              ))}
            </select>
            {e("add-pattern", "weekday") && (
              <p id="weekday-error" className="field-error">
                {e("add-pattern", "weekday")}
              </p>
            )}
          </div>
          <Field
            id="startTime"
            name="startTime"
            label="From"
            type="time"
            defaultValue="08:00"
            error={e("add-pattern", "startTime")}
          />
          <Field
            id="endTime"
            name="endTime"
            label="To"
            type="time"
            defaultValue="12:00"
            error={e("add-pattern", "endTime")}
          />
          <button className="btn-quiet" type="submit">
            Add window
          </button>
        </Form>
        {ok("add-pattern") && <Notice>{ok("add-pattern")}</Notice>}
        <FormError message={e("add-pattern", "_form")} />
      </section>
      <section aria-labelledby="leave" className="card grid gap-3">
        <h2 id="leave" className="text-lg font-semibold">
          Leave
        </h2>
        <ul className="grid gap-1">
          {t.leave.map((l) => (
            <li key={l.id} className="flex flex-wrap items-center gap-2">
              <span>
                {l.startsOn} – {l.endsOn}
                {l.reason ? `: ${l.reason}` : ""}
              </span>
              <Form method="post">
                <input type="hidden" name="intent" value="remove-leave" />
                <input type="hidden" name="id" value={l.id} />
                <button
                  className="text-sm text-alert underline"
                  type="submit"
                  aria-label={`Remove leave ${l.startsOn} to ${l.endsOn}`}
                >
                  Remove
                </button>
              </Form>
            </li>
          ))}
        </ul>
        <Form method="post" className="grid gap-3 md:grid-cols-4 md:items-end" noValidate>
          <input type="hidden" name="intent" value="add-leave" />
          <Field id="startsOn" name="startsOn" label="From" type="date" error={e("add-leave", "startsOn")} />
          <Field id="endsOn" name="endsOn" label="To (inclusive)" type="date" error={e("add-leave", "endsOn")} />
          <Field id="reason" name="reason" label="Reason (optional)" error={e("add-leave", "reason")} />
          <button className="btn-quiet" type="submit">
            Add leave
          </button>
        </Form>
        {ok("add-leave") && <Notice>{ok("add-leave")}</Notice>}
        <FormError message={e("add-leave", "_form")} />
      </section>
    </div>
  );
}
