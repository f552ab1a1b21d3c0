import { authenticateApi } from "~/auth/guard.server";
import { can } from "~/auth/permissions";
import { scopeFrom } from "~/auth/scope";
import { listSites, sitesInScope } from "~/models/sites.server";
import type { Route } from "./+types/api.v1.sites";

// Sites the caller may work with (no personal data). Any authenticated caller; scoped.
export async function loader({ request }: Route.LoaderArgs) {
  const who = await authenticateApi(request);
  const scope =
    who.kind === "apiKey"
      ? { allSites: false, siteIds: who.key.siteIds, departmentIds: [] }
      : scopeFrom(who.user.assignments, who.user.roles);
  const sites = who.kind === "user" && can(who.user, "admin.sites") ? await listSites() : await sitesInScope(scope);
  return Response.json({ sites });
}
