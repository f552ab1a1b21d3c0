import { invariantResponse } from "@epic-web/invariant";
import { Form, Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionErrors, ActionForm, ActionNotice, CheckboxGroup, SelectField, TextField } from "~/components/fields";
import { LeaveSection } from "~/components/leave-form";
import { WEEKDAY_NAMES } from "~/compute/plan-calendar";
import { formAction } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import { planningChoices } from "~/models/fleet-admin.server";
import {
  addPattern,
  addTrainerLeave,
  removePattern,
  removeTrainerLeave,
  trainerDetail,
  updateTrainer,
} from "~/models/trainers-admin.server";
import { trainerPageSchema } from "~/schemas/allocation";
import type { Route } from "./+types/coordinate.trainers.$trainerId";

export const meta: Route.MetaFunction = () => [{ title: "Trainer · Limberly" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "fleet.manage");
  const trainer = await trainerDetail(p.scope, Number(params.trainerId));
  invariantResponse(trainer, "No such trainer at your sites.", { status: 404 });
  if (trainer.traineeIds.length) await recordAccess(p, request, trainer.traineeIds, "sessions");
  return { trainer, deviceTypes: (await planningChoices(p.scope)).deviceTypes };
}

export async function action({ request, params }: Route.ActionArgs) {
  const p = await requireUser(request, "fleet.manage");
  const id = Number(params.trainerId);
  return formAction(await request.formData(), trainerPageSchema, async (v) => {
    switch (v.intent) {
      case "trainer":
        await updateTrainer(p, id, v);
        return "Trainer saved.";
      case "add-pattern":
        await addPattern(p, id, v);
        return "Working window added.";
      case "add-leave":
        await addTrainerLeave(p, id, v);
        return "Leave added.";
      case "remove-pattern":
        await removePattern(p, id, v.id);
        return "Removed.";
      case "remove-leave":
        await removeTrainerLeave(p, id, v.id);
        return "Removed.";
    }
  });
}

export default function TrainerPage({ loaderData, actionData }: Route.ComponentProps) {
  const { trainer: t, deviceTypes } = loaderData;
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
        <ActionForm intent="trainer" result={actionData} className="grid gap-3">
          <div className="grid gap-3 md:grid-cols-2">
            <TextField
              name="hoursPerWeek"
              label="Hours per week (contracted)"
              type="number"
              step="0.5"
              defaultValue={String(t.hoursPerWeek)}
            />
            <TextField
              name="traineesPerSession"
              label="Trainees per session"
              type="number"
              defaultValue={String(t.traineesPerSession)}
            />
            <TextField
              name="maxContinuousMinutes"
              label="Longest teaching without a break (min)"
              type="number"
              step="1"
              defaultValue={String(t.maxContinuousMinutes)}
            />
            <TextField
              name="breakMinutes"
              label="Break after it (min)"
              type="number"
              step="1"
              defaultValue={String(t.breakMinutes)}
              hint="Sessions closer together than this count as one stretch of teaching."
            />
          </div>
          <CheckboxGroup
            name="deviceTypeIds"
            legend="Certified device types"
            defaultValues={t.certifications.map((c) => String(c.id))}
            options={deviceTypes.map((d) => ({ value: String(d.id), label: d.name }))}
          />
          <div className="flex flex-wrap items-center gap-3">
            <button className="btn-quiet" type="submit">
              Save trainer
            </button>
            <ActionNotice result={actionData} intent="trainer" />
          </div>
        </ActionForm>
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
        <ActionErrors result={actionData} intent="remove-pattern" />
        <ActionNotice result={actionData} intent="remove-pattern" />
        <ActionForm intent="add-pattern" result={actionData} className="grid gap-3 md:grid-cols-4 md:items-end">
          <SelectField
            name="weekday"
            label="Weekday"
            options={WEEKDAY_NAMES.slice(1).map((n, i) => ({ value: String(i + 1), label: n }))}
          />
          <TextField name="startTime" label="From" type="time" defaultValue="08:00" />
          <TextField name="endTime" label="To" type="time" defaultValue="12:00" />
          <button className="btn-quiet" type="submit">
            Add window
          </button>
        </ActionForm>
        <ActionNotice result={actionData} intent="add-pattern" />
      </section>
      <LeaveSection heading="Leave" leave={t.leave} result={actionData} />
      <section aria-labelledby="sessions" className="card grid gap-2">
        <h2 id="sessions" className="text-lg font-semibold">
          Upcoming sessions in the published plan ({t.sessions.length})
        </h2>
        {t.sessions.length === 0 ? (
          <p className="text-ink-soft">None in the published plan.</p>
        ) : (
          <ul className="grid gap-1 text-sm" data-testid="trainer-sessions">
            {t.sessions.map((s) => (
              <li key={s.id} data-session-id={s.id}>
                {s.start}–{s.end} · {s.device}
                {s.unit ? ` (unit ${s.unit})` : ""} · {s.worker}
              </li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}
