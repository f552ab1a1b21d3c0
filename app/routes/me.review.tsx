import { useActionData, useNavigation } from "react-router";
import { ActionForm, ActionNotice, SelectField, TextArea } from "~/components/fields";
import { formatInstantDay } from "~/dates";
import { formAction } from "~/forms.server";
import { createReviewRequest, myReviewRequests } from "~/models/reviews.server";
import { myForecasts } from "~/models/self-service.server";
import { workerTimeZone } from "~/models/sites.server";
import { REVIEW_SUBJECT_LABELS, REVIEW_SUBJECTS, reviewRequestSchema } from "~/schemas/portal";
import type { Route } from "./+types/me.review";
import { requireOwnWorker } from "./me.guard.server";

export const meta: Route.MetaFunction = () => [{ title: "Ask for a review · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const { workerId } = await requireOwnWorker(request, "self.read");
  const devices = (await myForecasts(workerId)).map((f) => ({ id: f.deviceTypeId, name: f.deviceType }));
  return { requests: await myReviewRequests(workerId), devices, timeZone: await workerTimeZone(workerId) };
}

export async function action({ request }: Route.ActionArgs) {
  const { p, workerId } = await requireOwnWorker(request, "self.review");
  return formAction(await request.formData(), reviewRequestSchema, async (v) => {
    await createReviewRequest(workerId, p.user.id, v);
    return v.subject === "plan"
      ? "Your request is with the training coordinators. You will get an e-mail when a person has answered."
      : "Your request is with the assessors. You will get an e-mail when a person has answered.";
  });
}

export default function MyReview({ loaderData }: Route.ComponentProps) {
  const { requests, devices, timeZone } = loaderData;
  const formatDay = (at: string) => formatInstantDay(at, timeZone);
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">Ask for a review</h1>
        <p className="text-ink-soft">
          Forecasts and plans are worked out by the software to help people plan. You can always ask a person — an
          assessor — to look at yours again.
        </p>
      </div>
      <ActionNotice result={result} />
      <section className="card" aria-labelledby="ask-h">
        <h2 id="ask-h" className="text-lg font-semibold">
          New request
        </h2>
        {/* A new key after each success starts an empty form. */}
        <ActionForm result={result} className="mt-3 grid gap-4" key={result?.notice ?? "form"}>
          <SelectField
            name="subject"
            label="What should be reviewed?"
            required
            options={REVIEW_SUBJECTS.map((s) => ({ value: s, label: REVIEW_SUBJECT_LABELS[s] }))}
          />
          <SelectField
            name="deviceTypeId"
            label="Which device (optional)"
            options={[
              { value: "", label: "Not about one device" },
              ...devices.map((d) => ({ value: String(d.id), label: d.name })),
            ]}
          />
          <TextArea
            name="message"
            label="What would you like a person to look at?"
            required
            rows={4}
            hint="For example: the hours look too high for me, or the session times clash with my shifts."
          />
          <div>
            <button type="submit" className="btn-primary min-h-11" disabled={busy}>
              {busy ? "Sending…" : "Send request"}
            </button>
          </div>
        </ActionForm>
      </section>
      <section className="card" aria-labelledby="mine-h">
        <h2 id="mine-h" className="text-lg font-semibold">
          My requests
        </h2>
        {requests.length === 0 ? (
          <p className="mt-2 text-ink-soft">You have not asked for a review yet.</p>
        ) : (
          <ul className="mt-2 grid gap-3" data-testid="my-reviews">
            {requests.map((r) => (
              <li key={r.id} className="rounded-md border border-line p-3">
                <p className="font-medium">
                  {REVIEW_SUBJECT_LABELS[r.subject]}
                  {r.deviceType ? ` · ${r.deviceType}` : ""}{" "}
                  <span className="text-sm text-ink-soft">· asked {formatDay(r.createdAt)}</span>
                </p>
                <p className="mt-1 whitespace-pre-line">{r.message}</p>
                {r.status === "answered" ? (
                  <div className="mt-2 rounded-md bg-spruce-50 p-2">
                    <p className="text-sm font-semibold">
                      Answer from {r.answeredBy ?? "an assessor"}
                      {r.answeredAt ? `, ${formatDay(r.answeredAt)}` : ""}
                    </p>
                    <p className="whitespace-pre-line">{r.answer}</p>
                  </div>
                ) : (
                  <p className="mt-2 text-sm text-amber-caution">Waiting for an answer</p>
                )}
              </li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}
