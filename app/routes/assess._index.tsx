import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { WorkQueue } from "~/components/work-queue";
import { STAGE_LABELS, STAGES, type Stage } from "~/domain/stages";
import { assessorQueue } from "~/models/work-queues.server";
import { stageCountsBySite } from "~/models/workers.server";
import type { Route } from "./+types/assess._index";

export const meta: Route.MetaFunction = () => [{ title: "Assessment home · Limberly" }];

// The assessor's start: where the workers at their sites stand in the flow.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "workers.read");
  const [counts, queue] = await Promise.all([stageCountsBySite(p.scope), assessorQueue(p)]);
  return { name: p.user.displayName, counts, queue };
}

export default function AssessHome({ loaderData }: Route.ComponentProps) {
  const sites = [...new Set(loaderData.counts.map((c) => c.site))];
  const cell = (site: string, stage: Stage) =>
    loaderData.counts.find((c) => c.site === site && c.stage === stage)?.n ?? 0;
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title" data-testid="role-home">
          Assessment home
        </h1>
        <p className="text-ink-soft">Workers at your sites by readiness stage.</p>
      </div>
      <WorkQueue items={loaderData.queue} />
      <nav aria-label="Assessment tasks" className="grid gap-3 sm:grid-cols-3">
        {[
          { to: "/assess/workers", title: "Workers", text: "Find a worker, record consent, start a baseline." },
          { to: "/assess/roster", title: "Roster import", text: "Upload the roster (CSV or XLSX), preview, import." },
          { to: "/assess/measures", title: "Measures", text: "Configure the baseline battery." },
          { to: "/assess/norms", title: "Norms", text: "Cohort-derived or published norm sets." },
          { to: "/assess/reliability", title: "Reliability", text: "ICC, SEM and MDC95 from repeated baselines." },
        ].map((l) => (
          <Link key={l.to} to={l.to} className="card block hover:bg-spruce-50">
            <span className="font-semibold text-spruce-700">{l.title}</span>
            <span className="block text-sm text-ink-soft">{l.text}</span>
          </Link>
        ))}
      </nav>
      <section className="card overflow-x-auto p-0" tabIndex={0} aria-label="Workers by site and stage">
        <table className="table-base">
          <caption className="sr-only">Workers by site and stage</caption>
          <thead>
            <tr>
              <th scope="col">Site</th>
              {STAGES.map((s) => (
                <th key={s} scope="col" className="text-right">
                  {STAGE_LABELS[s]}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {sites.map((site) => (
              <tr key={site}>
                <th scope="row">{site}</th>
                {STAGES.map((s) => (
                  <td key={s} className="text-right tabular-nums">
                    {cell(site, s)}
                  </td>
                ))}
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}
