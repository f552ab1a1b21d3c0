import { index, layout, type RouteConfig, route } from "@react-router/dev/routes";
import { AREAS } from "./route-groups";
import type { RouteSpec } from "./route-groups/types";

const routesOf = (specs: RouteSpec[]) => specs.map(([path, file]) => route(path, file));

// Every route here is walked by tests/integration/route-guard.test.ts: it must be on the public
// allow-list there, or refuse anonymous access.
export default [
  index("routes/home.tsx"),
  route("sign-in", "routes/sign-in.tsx"),
  route("auth/start", "routes/auth.start.ts"),
  route("auth/callback", "routes/auth.callback.ts"),
  route("auth/not-provisioned", "routes/auth.not-provisioned.tsx"),
  route("sign-out", "routes/sign-out.ts"),

  layout("routes/shell.tsx", [
    route("assess", "routes/assess._index.tsx"),
    route("coordinate", "routes/coordinate._index.tsx"),
    route("train", "routes/train._index.tsx"),
    route("readiness", "routes/readiness._index.tsx"),
    route("me", "routes/me._index.tsx"),
    route("admin", "routes/admin._index.tsx"),
    route("admin/users", "routes/admin.users.tsx"),
    route("admin/users/:userId", "routes/admin.users.$userId.tsx"),
    route("admin/sites", "routes/admin.sites.tsx"),
    route("admin/sites/:siteId/calendar", "routes/admin.sites.$siteId.calendar.tsx"),
    route("admin/api-keys", "routes/admin.api-keys.tsx"),
    route("admin/approvals", "routes/admin.approvals.tsx"),
    route("admin/consent-texts", "routes/admin.consent-texts.tsx"),
    route("admin/access-log", "routes/admin.access-log.tsx"),
    route("admin/outbox", "routes/admin.outbox.tsx"),
    ...AREAS.flatMap((a) => routesOf(a.routes)),
  ]),
  ...AREAS.flatMap((a) => routesOf(a.outsideShell)),
  route("admin/access-log/export.xlsx", "routes/admin.access-log.export.ts"),

  route("api/v1/health", "routes/api.v1.health.ts"),
  route("api/v1/me", "routes/api.v1.me.ts"),
  route("api/v1/sites", "routes/api.v1.sites.ts"),

  route("*", "routes/not-found.tsx"),
] satisfies RouteConfig;
