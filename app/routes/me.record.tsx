import { formatInstant } from "~/dates";
import { accessLogForWorker } from "~/models/access-log.server";
import { workerTimeZone } from "~/models/sites.server";
import type { Route } from "./+types/me.record";
import { requireOwnWorker } from "./me.guard.server";

export const meta: Route.MetaFunction = () => [{ title: "My record and downloads · Limberly" }];

const RESOURCE_WORDS: Record<string, string> = {
  assessment: "baseline assessment",
  trace: "uploaded trace",
  forecast: "forecast",
  progress: "training progress",
  plan: "training plan",
  sessions: "training sessions",
  profile: "worker record",
  export: "an export",
};

export async function loader({ request }: Route.LoaderArgs) {
  const { workerId } = await requireOwnWorker(request, "self.read");
  return { log: await accessLogForWorker(workerId), timeZone: await workerTimeZone(workerId) };
}

export default function MyRecord({ loaderData }: Route.ComponentProps) {
  const { log, timeZone } = loaderData;
  return (
    <div className="grid gap-6">
      <h1 className="page-title">My record and downloads</h1>
      <section className="card grid gap-3" aria-labelledby="dl-h">
        <h2 id="dl-h" className="text-lg font-semibold">
          Download everything held about me
        </h2>
        <p className="text-sm text-ink-soft">
          Your details, consent, assessments, forecasts, courses, sessions, adverse events, stage changes, review
          requests and this access log.
        </p>
        <div className="flex flex-wrap gap-3">
          <a className="btn-primary min-h-11" href="/me/export.json" download>
            Download as JSON
          </a>
          <a className="btn-primary min-h-11" href="/me/export.xlsx" download>
            Download as spreadsheet (XLSX)
          </a>
          <a className="btn-quiet min-h-11" href="/me/calendar.ics" download>
            My sessions as a calendar file (.ics)
          </a>
        </div>
      </section>
      <section className="card overflow-x-auto p-0" aria-labelledby="log-h" tabIndex={0}>
        <h2 id="log-h" className="px-4 pt-4 text-lg font-semibold">
          Who looked at my data
        </h2>
        <p className="px-4 text-sm text-ink-soft">
          Every time staff open your health data it is written here. Times are UTC.
        </p>
        <table className="table-base mt-2" data-testid="access-log">
          <caption className="sr-only">Access log of my record</caption>
          <thead>
            <tr>
              <th scope="col">When</th>
              <th scope="col">Who</th>
              <th scope="col">Role</th>
              <th scope="col">What</th>
            </tr>
          </thead>
          <tbody>
            {log.length === 0 && (
              <tr>
                <td colSpan={4}>Nobody has opened your health data yet.</td>
              </tr>
            )}
            {log.map((r, i) => (
              // biome-ignore lint/suspicious/noArrayIndexKey: a fixed page of the log per load, never reordered
              <tr key={i}>
                <td>{formatInstant(r.at, timeZone)}</td>
                <td>{r.who}</td>
                <td>{r.role ?? ""}</td>
                <td>
                  {r.action === "undo"
                    ? "undid the last mark (log or no-show) of a training session"
                    : `${r.action === "export" ? "exported" : "read"} ${RESOURCE_WORDS[r.resource] ?? r.resource}`}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}
