import type { Route } from "./+types/readiness._index";
import { requireUser } from "~/auth/guard.server";
import { db } from "~/db.server";
import { whereWorkerInScope } from "~/models/workers.server";

export const meta: Route.MetaFunction = () => [{ title: "Department readiness · Limberly" }];

// Managers get aggregates only: this loader selects grouped counts, never worker rows.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "readiness.read");
  const q = db()("workers").join("departments as d", "d.id", "workers.department_id").join("sites as s", "s.id", "workers.site_id")
    .select("s.name as site", "d.name as department").count<{ site: string; department: string; n: number }[]>({ n: "*" })
    .groupBy("s.name", "d.name").orderBy([{ column: "s.name" }, { column: "d.name" }]);
  const rows: { site: string; department: string; n: number | string }[] = await whereWorkerInScope(q, p.scope);
  return { departments: rows.map((r) => ({ site: r.site, department: r.department, headcount: Number(r.n) })) };
}

export default function ReadinessHome({ loaderData }: Route.ComponentProps) {
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title" data-testid="role-home">Department readiness</h1>
        <p className="text-ink-soft">Aggregates for your departments only. No individual's data is shown or sent to this page.</p>
      </div>
      <ul className="grid gap-3 md:grid-cols-2">
        {loaderData.departments.map((d) => (
          <li key={`${d.site}-${d.department}`} className="card">
            <p className="font-semibold">{d.department}</p>
            <p className="text-sm text-ink-soft">{d.site} · {d.headcount} people on the roster</p>
          </li>
        ))}
      </ul>
    </div>
  );
}
