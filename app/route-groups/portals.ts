import type { Area } from "./types";

// Portals: the worker's own plan, consent, record and review requests (/me, home in app/routes.ts);
// the trainer's day and session log (/train, home in app/routes.ts); the assessors' review queue.
// Worker routes take no worker id: it always comes from the signed-in session.
export const portals: Area = {
  routes: [
    ["me/consent", "routes/me.consent.tsx"],
    ["me/record", "routes/me.record.tsx"],
    ["me/review", "routes/me.review.tsx"],
    ["train/sessions/:sessionId", "routes/train.sessions.$sessionId.tsx"],
    ["assess/reviews", "routes/assess.reviews.tsx"],
    ["coordinate/reviews", "routes/coordinate.reviews.tsx"],
  ],
  outsideShell: [
    ["me/export.json", "routes/me.export.json.ts"],
    ["me/export.xlsx", "routes/me.export.xlsx.ts"],
    ["me/calendar.ics", "routes/me.calendar.ics.ts"],
    ["api/v1/me/plan", "routes/api.v1.me.plan.ts"],
  ],
  nav: {
    worker: [
      { to: "/me/consent", label: "My consent" },
      { to: "/me/record", label: "My record and downloads" },
      { to: "/me/review", label: "Ask for a review" },
    ],
    assessor: [{ to: "/assess/reviews", label: "Review requests" }],
    coordinator: [{ to: "/coordinate/reviews", label: "Review requests" }],
  },
};
