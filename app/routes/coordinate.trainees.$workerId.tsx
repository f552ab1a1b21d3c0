import { data, Form, Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { StageBadge } from "~/components/badges";
import { DeviceCautions } from "~/components/device-cautions";
import { FormError, Notice, TextArea, TextField } from "~/components/fields";
import { recordAccess } from "~/models/access-log.server";
import {
  addWorkerLeave,
  removeWorkerLeave,
  saveTrainingFields,
  TrainingAdminError,
  traineeDetail,
} from "~/models/trainers-admin.server";
import { leaveFormSchema, removeByIdSchema, workerTrainingFormSchema } from "~/schemas/allocation";
import { formToObject, parseWith } from "~/schemas/form";
import type { Route } from "./+types/coordinate.trainees.$workerId";

export const meta: Route.MetaFunction = () => [{ title: "Trainee · Limberly" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "allocation.run");
  const w = await traineeDetail(p.scope, Number(params.workerId));
  if (!w) throw data({ error: "No such worker in your scope." }, { status: 404 });
  if (w.sessions.length) await recordAccess(p, request, w.workerId, "sessions");
  return { w };
}

type Result = { ok?: string; errors?: Record<string, string>; intent?: string };

export async function action({ request, params }: Route.ActionArgs): Promise<Result> {
  const p = await requireUser(request, "allocation.run");
  const id = Number(params.workerId);
  const raw = formToObject(await request.formData());
  const intent = String(raw.intent ?? "");
  try {
    if (intent === "training-fields") {
      const r = parseWith(workerTrainingFormSchema, raw);
      if (!r.ok) return { errors: r.errors, intent };
      await saveTrainingFields(p, id, r.data);
      return { ok: "Training fields saved.", intent };
    }
    if (intent === "add-leave") {
      const r = parseWith(leaveFormSchema, raw);
      if (!r.ok) return { errors: r.errors, intent };
      await addWorkerLeave(p, id, r.data);
      return { ok: "Leave added.", intent };
    }
    if (intent === "remove-leave") {
      const r = parseWith(removeByIdSchema, raw);
      if (!r.ok) return { errors: r.errors, intent };
      await removeWorkerLeave(p, id, r.data.id);
      return { ok: "Leave removed.", intent };
    }
    return { errors: { _form: "Unknown action." }, intent };
  } catch (e) {
    if (e instanceof TrainingAdminError) return { errors: { _form: e.message }, intent };
    throw e;
  }
}

export default function Trainee({ loaderData, actionData }: Route.ComponentProps) {
  const { w } = loaderData;
  const e = (intent: string, f: string) => (actionData?.intent === intent ? actionData.errors?.[f] : undefined);
  const ok = (intent: string) => (actionData?.intent === intent ? actionData.ok : undefined);
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
        <Form method="post" className="grid gap-3" noValidate>
          <input type="hidden" name="intent" value="training-fields" />
          <div className="grid gap-3 md:grid-cols-2">
            <TextField
              name="priority"
              label="Priority"
              type="number"
              defaultValue={String(w.priority)}
              error={e("training-fields", "priority")}
              hint="1 is the default; higher means more value in being ready soon."
            />
            <TextField
              name="maxHoursPerWeek"
              label="Max hours per week"
              type="number"
              defaultValue={w.maxHoursPerWeek == null ? "" : String(w.maxHoursPerWeek)}
              error={e("training-fields", "maxHoursPerWeek")}
              hint="Empty = the device type's default."
            />
          </div>
          <TextArea
            name="priorityReason"
            label="Reason for the priority"
            rows={2}
            defaultValue={w.priorityReason ?? ""}
            error={e("training-fields", "priorityReason")}
          />
          <div className="flex flex-wrap items-center gap-3">
            <button className="btn-quiet" type="submit">
              Save training fields
            </button>
            {ok("training-fields") && <Notice>{ok("training-fields")}</Notice>}
          </div>
          <FormError message={e("training-fields", "_form")} />
        </Form>
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
        <Form method="post" className="grid gap-3 md:grid-cols-4 md:items-end" noValidate>
          <input type="hidden" name="intent" value="add-leave" />
          <TextField name="startsOn" label="From" type="date" error={e("add-leave", "startsOn")} />
          <TextField name="endsOn" label="To (inclusive)" type="date" error={e("add-leave", "endsOn")} />
          <TextField name="reason" label="Reason (optional)" error={e("add-leave", "reason")} />
          <button className="btn-quiet" type="submit">
            Add leave
          </button>
        </Form>
        {ok("add-leave") && <Notice>{ok("add-leave")}</Notice>}
        <FormError message={e("add-leave", "_form")} />
      </section>
      <section aria-labelledby="sessions" className="card grid gap-2">
        <h2 id="sessions" className="text-lg font-semibold">
          Published sessions
        </h2>
        {w.sessions.length === 0 ? (
          <p className="text-ink-soft">None in the published plan.</p>
        ) : (
          <ul className="grid gap-1 text-sm">
            {w.sessions.map((s, i) => (
              // biome-ignore lint/suspicious/noArrayIndexKey: a fixed list per load, never reordered
              <li key={i}>
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
