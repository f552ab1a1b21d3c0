import { Link, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionForm, ActionNotice, TextArea } from "~/components/fields";
import { formatInstantDay } from "~/dates";
import { formAction } from "~/forms.server";
import { answerReview, reviewQueue } from "~/models/reviews.server";
import { viewerTimeZone } from "~/models/sites.server";
import { REVIEW_SUBJECT_LABELS, reviewAnswerSchema } from "~/schemas/portal";
import type { Route } from "./+types/assess.reviews";

export const meta: Route.MetaFunction = () => [{ title: "Review requests · Limberly" }];

// The assessors' queue of workers' review requests, limited to workers in the assessor's scope.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "reviews.answer");
  const url = new URL(request.url);
  const show = url.searchParams.get("show") === "answered" ? "answered" : "open";
  return { show, requests: await reviewQueue(p, show), timeZone: await viewerTimeZone(p) };
}

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "reviews.answer");
  return formAction(await request.formData(), reviewAnswerSchema, async (v) => {
    const r = await answerReview(p, v.reviewId, v.answer);
    return r.mailedTo
      ? "Answer saved and e-mailed to the worker."
      : "Answer saved. The worker has no e-mail address on file; they will see it in the app.";
  });
}

export default function ReviewQueue({ loaderData }: Route.ComponentProps) {
  const { show, requests, timeZone } = loaderData;
  const formatDay = (at: string) => formatInstantDay(at, timeZone);
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">Review requests</h1>
        <p className="text-ink-soft">
          Workers who ask a person to look at their forecast or plan. Your answer is shown to them in the app and
          e-mailed.
        </p>
        <nav aria-label="Which requests" className="mt-2 flex gap-3">
          <Link
            to="/assess/reviews"
            className={show === "open" ? "font-semibold underline" : "text-spruce-700 underline"}
            aria-current={show === "open" ? "page" : undefined}
          >
            Open
          </Link>
          <Link
            to="/assess/reviews?show=answered"
            className={show === "answered" ? "font-semibold underline" : "text-spruce-700 underline"}
            aria-current={show === "answered" ? "page" : undefined}
          >
            Answered
          </Link>
        </nav>
      </div>
      <ActionNotice result={result} />
      {requests.length === 0 && <p className="card text-ink-soft">No {show} requests for workers at your sites.</p>}
      <ul className="grid gap-4" data-testid="review-queue">
        {requests.map((r) => {
          return (
            <li key={r.id} className="card grid gap-2" data-testid={`review-${r.id}`}>
              <p className="font-semibold">
                {r.name} · {r.employeeNumber}
              </p>
              <p className="text-sm text-ink-soft">
                {REVIEW_SUBJECT_LABELS[r.subject]}
                {r.deviceType ? ` · ${r.deviceType}` : ""} · asked {formatDay(r.createdAt)}
              </p>
              <p className="whitespace-pre-line">{r.message}</p>
              <p className="text-sm">
                <Link className="text-spruce-700 underline" to={`/forecast/${r.workerId}`}>
                  Open the forecast
                </Link>
                {r.deviceTypeId ? (
                  <>
                    {" "}
                    ·{" "}
                    <Link className="text-spruce-700 underline" to={`/progress/${r.workerId}/${r.deviceTypeId}`}>
                      progress
                    </Link>
                  </>
                ) : null}
              </p>
              {r.status === "answered" ? (
                <div className="rounded-md bg-spruce-50 p-2">
                  <p className="text-sm font-semibold">
                    Answered by {r.answeredBy}
                    {r.answeredAt ? `, ${formatDay(r.answeredAt)}` : ""}
                  </p>
                  <p className="whitespace-pre-line">{r.answer}</p>
                </div>
              ) : (
                // One form per request, told apart by its reviewId; field ids come from useId.
                <ActionForm result={result} match={{ reviewId: String(r.id) }} className="grid gap-2">
                  <input type="hidden" name="reviewId" value={r.id} />
                  <TextArea name="answer" label={`Answer to ${r.name}`} rows={3} required />
                  <div>
                    <button type="submit" className="btn-primary min-h-11" disabled={busy}>
                      Send answer
                    </button>
                  </div>
                </ActionForm>
              )}
            </li>
          );
        })}
      </ul>
    </div>
  );
}
