import { reviewQueueAction, reviewQueueLoader } from "~/review-queue.server";
import type { Route } from "./+types/coordinate.reviews";

// Coordinators answer workers' questions about their plan on the same queue page the assessors use for
// figures (its component below); which requests each sees is decided in the model (domain/review-owners.ts).
export { default, meta } from "./assess.reviews";
export const loader = ({ request }: Route.LoaderArgs) => reviewQueueLoader(request, "reviews.plan");
export const action = ({ request }: Route.ActionArgs) => reviewQueueAction(request, "reviews.plan");
