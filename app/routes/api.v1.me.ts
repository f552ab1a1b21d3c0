import { authenticateApi } from "~/auth/guard.server";
import { actionsFor } from "~/auth/permissions";
import type { Route } from "./+types/api.v1.me";

// Who the caller is: role, permitted actions and site scope. Any authenticated caller may ask.
export async function loader({ request }: Route.LoaderArgs) {
  const who = await authenticateApi(request);
  if (who.kind === "apiKey") {
    return Response.json({
      kind: "apiKey",
      name: who.key.name,
      role: who.key.role,
      actions: actionsFor(who.key.role),
      siteIds: who.key.siteIds,
    });
  }
  return Response.json({
    kind: "user",
    email: who.user.email,
    roles: who.user.roles,
    actions: [...new Set(who.user.roles.flatMap((r) => actionsFor(r)))],
  });
}
