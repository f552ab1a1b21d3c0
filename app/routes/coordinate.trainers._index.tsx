import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { WEEKDAY_NAMES } from "~/compute/plan-calendar";
import { trainerList } from "~/models/trainers-admin.server";
import type { Route } from "./+types/coordinate.trainers._index";

export const meta: Route.MetaFunction = () => [{ title: "Trainers · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "fleet.manage");
  return { trainers: await trainerList(p.scope) };
}

export default function Trainers({ loaderData }: Route.ComponentProps) {
  const { trainers } = loaderData;
  return (
    <div className="grid gap-4">
      <div>
        <h1 className="page-title">Trainers</h1>
        <p className="text-ink-soft">
          Certifications per device type, weekly working pattern, leave and trainees per session. The allocator gives
          each trainer the hours of their pattern on days they are not on leave, at most their hours per week.
        </p>
      </div>
      <ul className="grid gap-3 md:grid-cols-2">
        {trainers.map((t) => {
          const patternHours = t.pattern.reduce(
            (s, p) =>
              s +
              (Number(p.end.slice(0, 2)) * 60 +
                Number(p.end.slice(3)) -
                Number(p.start.slice(0, 2)) * 60 -
                Number(p.start.slice(3))) /
                60,
            0,
          );
          return (
            <li key={t.id} className="card grid gap-1">
              <h2 className="font-semibold">
                <Link className="text-spruce-700 underline" to={`/coordinate/trainers/${t.id}`}>
                  {t.name}
                </Link>{" "}
                <span className="text-sm font-normal text-ink-soft">· {t.site}</span>
              </h2>
              <p className="text-sm">
                {t.hoursPerWeek} h/week contracted · pattern {patternHours.toFixed(1)} h/week · up to{" "}
                {t.traineesPerSession} trainee{t.traineesPerSession > 1 ? "s" : ""} per session
              </p>
              <p className="text-sm">Certified: {t.certifications.map((c) => c.name).join(", ") || "none"}</p>
              <p className="text-sm text-ink-soft">
                Works{" "}
                {[...new Set(t.pattern.map((p) => WEEKDAY_NAMES[p.weekday].slice(0, 3)))].join(", ") ||
                  "no pattern on file"}
                {t.leave.length ? ` · ${t.leave.length} leave period${t.leave.length > 1 ? "s" : ""}` : ""}
              </p>
            </li>
          );
        })}
      </ul>
    </div>
  );
}
