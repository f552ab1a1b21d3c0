import { requireUser } from "~/auth/guard.server";
import { recentSecurityEvents } from "~/auth/throttle.server";
import { WorkQueue } from "~/components/work-queue";
import { formatInstant } from "~/dates";
import { db } from "~/db.server";
import { viewerTimeZone } from "~/models/sites.server";
import { adminQueue } from "~/models/work-queues.server";
import type { Route } from "./+types/admin._index";

export const meta: Route.MetaFunction = () => [{ title: "Admin · Limberly" }];

// Counts only: admin runs the system but never sees health data.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "admin.users");
  const k = db();
  const count = async (t: string) => Number((await k(t).count<{ n: number }[]>({ n: "*" }).first())?.n ?? 0);
  const activeKeys = Number(
    (await k("api_keys").whereNull("revoked_at").count<{ n: number }[]>({ n: "*" }).first())?.n ?? 0,
  );
  return {
    users: await count("users"),
    sites: await count("sites"),
    departments: await count("departments"),
    workers: await count("workers"),
    activeKeys,
    accessReads: await count("access_log"),
    securityEvents: await recentSecurityEvents(),
    timeZone: await viewerTimeZone(p),
    queue: await adminQueue(p.kind === "user" ? p.user.id : null),
  };
}

export default function AdminHome({ loaderData: d }: Route.ComponentProps) {
  const tiles = [
    { label: "Users", value: d.users, to: "/admin/users" },
    { label: "Sites", value: d.sites, to: "/admin/sites" },
    { label: "Departments", value: d.departments, to: "/admin/sites" },
    { label: "Workers on roster", value: d.workers, to: "/admin/sites" },
    { label: "Active API keys", value: d.activeKeys, to: "/admin/api-keys" },
    { label: "Health-data reads logged", value: d.accessReads, to: "/admin/access-log" },
  ];
  return (
    <div className="grid gap-6">
      <h1 className="page-title" data-testid="role-home">
        Admin overview
      </h1>
      <WorkQueue items={d.queue} />
      <ul className="grid grid-cols-2 gap-3 md:grid-cols-3">
        {tiles.map((t) => (
          <li key={t.label}>
            <a href={t.to} className="card block hover:border-spruce-600">
              <span className="block text-3xl font-semibold">{t.value}</span>
              <span className="text-ink-soft">{t.label}</span>
            </a>
          </li>
        ))}
      </ul>
      <section aria-labelledby="security-alerts" className="card">
        <h2 id="security-alerts" className="text-lg font-semibold">
          Security alerts (last 7 days)
        </h2>
        {d.securityEvents.length === 0 ? (
          <p className="mt-2 text-ink-soft">No limit was reached: no repeated failed sign-ins, API keys or uploads.</p>
        ) : (
          <ul className="mt-2 grid gap-2" data-testid="security-alerts">
            {d.securityEvents.map((e) => (
              <li key={e.id}>
                <span className="font-medium">{formatInstant(e.at, d.timeZone)}</span> — {e.detail}
              </li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}
