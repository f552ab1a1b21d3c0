import { data, Link } from "react-router";
import { DeviceCautions } from "~/components/device-cautions";
import { NoShows } from "~/components/no-shows";
import { ProgressChart } from "~/components/progress-chart";
import { formatDay, formatSpan } from "~/dates";
import { STAGE_LABELS, type Stage } from "~/domain/stages";
import { type MyForecast, workerHome } from "~/models/self-service.server";
import type { Route } from "./+types/me._index";
import { requireOwnWorker } from "./me.guard.server";

export const meta: Route.MetaFunction = () => [{ title: "My plan and data · Limberly" }];

// A worker sees only their own record: the id comes from their session, never from the URL.
export async function loader({ request }: Route.LoaderArgs) {
  const { p, workerId } = await requireOwnWorker(request, "self.read");
  const home = await workerHome(p, workerId);
  if (!home) throw data({ error: "Your worker record was not found." }, { status: 404 });
  return home;
}

const h1 = (v: number) => `${v.toFixed(1)} hours`;
const r0 = (v: number) => (v < 10 ? v.toFixed(1) : v.toFixed(0));

function plainForecast(f: MyForecast): string {
  const pct = Math.round(f.intervalLevel * 100);
  if (f.courseStatus === "proficient" || f.status === "proficient")
    return `You have reached the proficiency level on the ${f.deviceType}. Well done.`;
  if (f.status === "review")
    return `Your scores have levelled off for now, so we are not guessing how many hours are left. A person will look at your progress with you (fit, settings, technique).`;
  if (f.hoursDone > 0 && f.remainingHours != null) {
    const range =
      f.remainingLower != null && f.remainingUpper != null
        ? ` Most likely between ${r0(f.remainingLower)} and ${r0(f.remainingUpper)} hours (${pct} % range).`
        : "";
    return `You have practised ${h1(f.hoursDone)} on the ${f.deviceType}. We expect about ${r0(f.remainingHours)} more hours of practice.${range}`;
  }
  return `We expect you to need about ${r0(f.medianHours)} hours of practice on the ${f.deviceType}. For ${pct} in 100 people with a baseline like yours it takes between ${r0(f.lowerHours)} and ${r0(f.upperHours)} hours.`;
}

export default function MeHome({ loaderData }: Route.ComponentProps) {
  const { me, next, firstSessionAhead, forecasts, progress, paused } = loaderData;
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title" data-testid="role-home">
          My plan and data
        </h1>
        <p className="text-ink-soft">
          {me.name} · {me.employeeNumber} · {me.department}, {me.site}
        </p>
      </div>

      {paused.length > 0 && (
        <div role="alert" className="rounded-md bg-alert-wash p-3 text-alert" data-testid="paused">
          <p className="font-semibold">Your training is paused</p>
          <ul className="list-disc pl-5">
            {paused.map((p) => (
              <li key={p.deviceType}>
                {p.deviceType}
                {p.reason ? `: ${p.reason}` : ""}
              </li>
            ))}
          </ul>
          <p className="mt-1 text-sm">
            An assessor will contact you before training resumes. If anything still hurts or feels numb, tell
            occupational health.
          </p>
        </div>
      )}

      {firstSessionAhead && next.length > 0 && (
        <section aria-labelledby="before-first" className="grid gap-2">
          <h2 id="before-first" className="text-lg font-semibold">
            Before your first session
          </h2>
          <DeviceCautions reader="worker" />
        </section>
      )}

      <section className="card" aria-labelledby="next-h">
        <div className="flex flex-wrap items-baseline justify-between gap-2">
          <h2 id="next-h" className="text-lg font-semibold">
            My next sessions
          </h2>
          <a href="/me/calendar.ics" className="btn-quiet" download>
            Add to my calendar (.ics)
          </a>
        </div>
        {next.length === 0 ? (
          <p className="mt-2 text-ink-soft" data-testid="no-sessions">
            No sessions are planned for you at the moment.
          </p>
        ) : (
          <>
            <p className="mt-1 text-sm text-ink-soft">Times are {next[0].timeZone} time, the clock of your site.</p>
            <ul className="mt-3 grid gap-3" data-testid="next-sessions">
              {next.map((s) => (
                <li key={s.id} className="rounded-md border border-line p-3" data-session-id={s.id}>
                  <p className="font-semibold">
                    {formatDay(s.start)} · {formatSpan(s.start, s.end)}
                  </p>
                  <p>
                    {s.deviceType}
                    {s.unit ? <span className="text-ink-soft"> · unit {s.unit}</span> : null}
                  </p>
                  <p className="text-sm text-ink-soft">
                    Where: {s.place}
                    {s.trainer ? ` · Trainer: ${s.trainer}` : ""}
                  </p>
                </li>
              ))}
            </ul>
          </>
        )}
      </section>

      <section className="card" aria-labelledby="stage-h">
        <h2 id="stage-h" className="text-lg font-semibold">
          Where I am
        </h2>
        <p className="mt-1 text-xl" data-testid="stage">
          {STAGE_LABELS[me.stage as Stage] ?? me.stage}
        </p>
      </section>

      <section className="card" aria-labelledby="forecast-h">
        <h2 id="forecast-h" className="text-lg font-semibold">
          My forecast
        </h2>
        {forecasts.length === 0 ? (
          <p className="mt-2 text-ink-soft" data-testid="no-forecast">
            There is no forecast for you yet. A forecast needs your planning consent, a baseline assessment and an
            approved model.
          </p>
        ) : (
          <ul className="mt-2 grid gap-3" data-testid="forecasts">
            {forecasts.map((f) => (
              <li key={f.deviceTypeId} data-testid={`my-forecast-${f.deviceTypeId}`}>
                <p className="font-medium">{f.deviceType}</p>
                <p>{plainForecast(f)}</p>
              </li>
            ))}
          </ul>
        )}
        <p className="mt-3 text-sm text-ink-soft">
          A forecast is a planning aid worked out from people who trained before you, not a judgement of you. If it
          looks wrong to you,{" "}
          <Link to="/me/review" className="text-spruce-700 underline">
            ask for a person to review it
          </Link>
          .
        </p>
      </section>

      {progress.map((v) => (
        <section
          key={v.deviceType.id}
          className="card"
          aria-labelledby={`progress-${v.deviceType.id}`}
          data-testid={`my-progress-${v.deviceType.code}`}
        >
          <h2 id={`progress-${v.deviceType.id}`} className="text-lg font-semibold">
            My progress · {v.deviceType.name}
          </h2>
          <p className="text-sm text-ink-soft">
            {v.sessions.length} session{v.sessions.length === 1 ? "" : "s"} logged ·{" "}
            {(v.course?.cumulativeHours ?? 0).toFixed(1)} h practised
            {v.criterion
              ? ` · goal: ${v.criterion.consecutiveSessions} sessions in a row scoring at least ${v.criterion.scoreThreshold}`
              : ""}
          </p>
          <ProgressChart
            sessions={v.sessions}
            curve={v.curvePoints}
            threshold={v.criterion?.scoreThreshold ?? null}
            crossing={v.course?.status === "proficient" ? null : (v.forecast?.crossing ?? null)}
          />
          <NoShows noShows={v.noShows} reader="worker" />
        </section>
      ))}

      {!(firstSessionAhead && next.length > 0) && <DeviceCautions compact reader="worker" />}
    </div>
  );
}
