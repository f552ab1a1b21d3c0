import { Link, useActionData, useNavigation } from "react-router";
import { ActionForm, ActionNotice, TextArea } from "~/components/fields";
import { formatInstantDay } from "~/dates";
import { reviewQueueAction, reviewQueueLoader } from "~/review-queue.server";
import { REVIEW_SUBJECT_LABELS } from "~/schemas/portal";
import type { Route } from "./+types/assess.reviews";

export const meta: Route.MetaFunction = () => [{ title: "Review requests · Limberly" }];

// The queue of workers' review requests that the signed-in person owns (assessors: figures; coordinators:
// plans), limited to workers in their scope. The coordinators' page at /coordinate/reviews is this module.
export const loader = ({ request }: Route.LoaderArgs) => reviewQueueLoader(request, "reviews.answer");
export const action = ({ request }: Route.ActionArgs) => reviewQueueAction(request, "reviews.answer");

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
            to="."
            className={show === "open" ? "font-semibold underline" : "text-spruce-700 underline"}
            aria-current={show === "open" ? "page" : undefined}
          >
            Open
          </Link>
          <Link
            to="?show=answered"
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
