import { invariantResponse } from "@epic-web/invariant";
import { Form, Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { StageBadge } from "~/components/badges";
import { DeviceCautions } from "~/components/device-cautions";
import { ActionForm, ActionNotice, TextArea, TextField } from "~/components/fields";
import { LeaveForm } from "~/components/leave-form";
import { formAction } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import { addWorkerLeave, removeWorkerLeave, saveTrainingFields, traineeDetail } from "~/models/trainers-admin.server";
import { traineePageSchema } from "~/schemas/allocation";
import type { Route } from "./+types/coordinate.trainees.$workerId";

export const meta: Route.MetaFunction = () => [{ title: "Trainee · Limberly" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "allocation.run");
  const w = await traineeDetail(p.scope, Number(params.workerId));
  invariantResponse(w, "No such worker in your scope.", { status: 404 });
  if (w.sessions.length) await recordAccess(p, request, w.workerId, "sessions");
  return { w };
}

export async function action({ request, params }: Route.ActionArgs) {
  const p = await requireUser(request, "allocation.run");
  const id = Number(params.workerId);
  return formAction(await request.formData(), traineePageSchema, async (v) => {
    switch (v.intent) {
      case "training-fields":
        await saveTrainingFields(p, id, v);
        return "Training fields saved.";
      case "add-leave":
        await addWorkerLeave(p, id, v);
        return "Leave added.";
      case "remove-leave":
        await removeWorkerLeave(p, id, v.id);
        return "Leave removed.";
    }
  });
}

export default function Trainee({ loaderData, actionData }: Route.ComponentProps) {
  const { w } = loaderData;
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link className="text-spruce-700 underline" to="/coordinate/trainees">
            Trainees
          </Link>
        </p>
        <h1 className="page-title">
          {w.employeeNumber} · {w.name}
        </h1>
        <p className="flex flex-wrap items-center gap-2 text-ink-soft">
          {w.site} · {w.department} <StageBadge stage={w.stage} />
        </p>
      </div>
      <section aria-labelledby="fields" className="card grid gap-3">
        <h2 id="fields" className="text-lg font-semibold">
          Training fields
        </h2>
        <ActionForm intent="training-fields" result={actionData} className="grid gap-3">
          <div className="grid gap-3 md:grid-cols-2">
            <TextField
              name="priority"
              label="Priority"
              type="number"
              defaultValue={String(w.priority)}
              hint="1 is the default; higher means more value in being ready soon."
            />
            <TextField
              name="maxHoursPerWeek"
              label="Max hours per week"
              type="number"
              defaultValue={w.maxHoursPerWeek == null ? "" : String(w.maxHoursPerWeek)}
              hint="Empty = the device type's default."
            />
          </div>
          <TextArea
            name="priorityReason"
            label="Reason for the priority"
            rows={2}
            defaultValue={w.priorityReason ?? ""}
          />
          <div className="flex flex-wrap items-center gap-3">
            <button className="btn-quiet" type="submit">
              Save training fields
            </button>
            <ActionNotice result={actionData} intent="training-fields" />
          </div>
        </ActionForm>
      </section>
      <section aria-labelledby="leave" className="card grid gap-3">
        <h2 id="leave" className="text-lg font-semibold">
          Leave (weeks not available for training)
        </h2>
        <ul className="grid gap-1">
          {w.leave.map((l) => (
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
        <LeaveForm result={actionData} />
      </section>
      <section aria-labelledby="sessions" className="card grid gap-2">
        <h2 id="sessions" className="text-lg font-semibold">
          Upcoming sessions in the published plan ({w.sessions.length})
        </h2>
        {w.sessions.length === 0 ? (
          <p className="text-ink-soft">None in the published plan.</p>
        ) : (
          <ul className="grid gap-1 text-sm" data-testid="trainee-sessions">
            {w.sessions.map((s) => (
              <li key={s.id} data-session-id={s.id}>
                {s.start}–{s.end} · {s.device}
                {s.unit ? ` (unit ${s.unit})` : ""}
                {s.trainer ? ` with ${s.trainer}` : ""}
              </li>
            ))}
          </ul>
        )}
      </section>
      <DeviceCautions compact />
    </div>
  );
}
