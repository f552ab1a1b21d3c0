import { data } from "react-router";
import { requireUser } from "~/auth/guard.server";
import type { Action } from "~/auth/permissions";

// Not a route: the one guard of the worker's own pages (/me/*). The worker id comes from the signed-in
// session (AppUser.workerId), never from the URL or the form.
export async function requireOwnWorker(request: Request, action: Extract<Action, `self.${string}`>) {
  const p = await requireUser(request, action);
  if (!p.user.workerId)
    throw data(
      { error: "Your account is not linked to a worker record. Ask your occupational health team." },
      { status: 404 },
    );
  return { p, workerId: p.user.workerId };
}
