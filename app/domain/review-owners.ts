import type { Role } from "~/auth/permissions";

// Who answers a worker's review request: the person who owns that decision. A question about a figure
// (the forecast) goes to the assessors; one about session timing (the plan) to the coordinators.
export const REVIEW_OWNER = { forecast: "assessor", plan: "coordinator" } as const satisfies Record<string, Role>;
export type ReviewSubject = keyof typeof REVIEW_OWNER;

/** The subjects a principal with these roles answers. */
export function subjectsOwnedBy(roles: readonly Role[]): ReviewSubject[] {
  return (Object.keys(REVIEW_OWNER) as ReviewSubject[]).filter((s) => roles.includes(REVIEW_OWNER[s]));
}

/** Where the owner of a subject answers it. */
export const REVIEW_QUEUE_PATH: Record<ReviewSubject, string> = {
  forecast: "/assess/reviews",
  plan: "/coordinate/reviews",
};
