import type { Route } from "./+types/assess._index";
import { requireUser } from "~/auth/guard.server";
import { STAGE_LABELS, STAGES, type Stage } from "~/components/stage";
import { stageCountsBySite } from "~/models/workers.server";

export const meta: Route.MetaFunction = () => [{ title: "Assessment home · Limberly" }];

// The assessor's start: where the workers at their sites stand in the flow.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "workers.read");
  return { name: p.user.displayName, counts: await stageCountsBySite(p.scope) };
}

export default function AssessHome({ loaderData }: Route.ComponentProps) {
  const sites = [...new Set(loaderData.counts.map((c) => c.site))];
  const cell = (site: string, stage: Stage) => loaderData.counts.find((c) => c.site === site && c.stage === stage)?.n ?? 0;
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title" data-testid="role-home">Assessment home</h1>
        <p className="text-ink-soft">Workers at your sites by readiness stage.</p>
      </div>
      <div className="card overflow-x-auto p-0">
        <table className="table-base">
          <caption className="sr-only">Workers by site and stage</caption>
          <thead><tr><th scope="col">Site</th>{STAGES.map((s) => <th key={s} scope="col">{STAGE_LABELS[s]}</th>)}</tr></thead>
          <tbody>{sites.map((site) => <tr key={site}><th scope="row">{site}</th>{STAGES.map((s) => <td key={s}>{cell(site, s)}</td>)}</tr>)}</tbody>
        </table>
      </div>
    </div>
  );
}
