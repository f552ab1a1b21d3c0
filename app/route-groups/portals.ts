import { type RouteConfigEntry, route } from "@react-router/dev/routes";
import type { NavByRole } from "./types";

// Portals (issue 7): the worker's own plan, consent, record and review requests (/me, home in app/routes.ts);
// the trainer's day and session log (/train, home in app/routes.ts); the assessors' review queue.
// Worker routes take no worker id: it always comes from the signed-in session.
export const routes: RouteConfigEntry[] = [
  route("me/consent", "routes/me.consent.tsx"),
  route("me/record", "routes/me.record.tsx"),
  route("me/review", "routes/me.review.tsx"),
  route("train/sessions/:sessionId", "routes/train.sessions.$sessionId.tsx"),
  route("assess/reviews", "routes/assess.reviews.tsx"),
];
// Resource routes outside the shell: exports, api/v1/*.
export const outsideShell: RouteConfigEntry[] = [
  route("me/export.json", "routes/me.export.json.ts"),
  route("me/export.xlsx", "routes/me.export.xlsx.ts"),
  route("me/calendar.ics", "routes/me.calendar.ics.ts"),
  route("api/v1/me/plan", "routes/api.v1.me.plan.ts"),
];
export const nav: NavByRole = {
  worker: [
    { to: "/me/consent", label: "My consent" },
    { to: "/me/record", label: "My record and downloads" },
    { to: "/me/review", label: "Ask for a review" },
  ],
  assessor: [{ to: "/assess/reviews", label: "Review requests" }],
};
