import { requireUser } from "~/auth/guard.server";
import type { Action } from "~/auth/permissions";
import { formAction } from "~/forms.server";
import { answerReview, reviewQueue } from "~/models/reviews.server";
import { viewerTimeZone } from "~/models/sites.server";
import { reviewAnswerSchema } from "~/schemas/portal";

// The loader and action of a review queue page, for the permission that opens it: the assessors' page
// (reviews.answer, figures) and the coordinators' (reviews.plan, plans). Which requests each person sees
// and may answer is decided in the model by the subjects their roles own.
export async function reviewQueueLoader(request: Request, permission: Action) {
  const p = await requireUser(request, permission);
  const url = new URL(request.url);
  const show = url.searchParams.get("show") === "answered" ? "answered" : "open";
  return { show, requests: await reviewQueue(p, show), timeZone: await viewerTimeZone(p) };
}

export async function reviewQueueAction(request: Request, permission: Action) {
  const p = await requireUser(request, permission);
  return formAction(await request.formData(), reviewAnswerSchema, async (v) => {
    const r = await answerReview(p, v.reviewId, v.answer);
    return r.mailedTo
      ? "Answer saved and e-mailed to the worker."
      : "Answer saved. The worker has no e-mail address on file; they will see it in the app.";
  });
}
