import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { listCoursesInScope } from "~/models/progress.server";
import type { Route } from "./+types/progress._index";

export const meta: Route.MetaFunction = () => [{ title: "Training progress · Limberly" }];

// Courses under way (and recently proficient) in the reader's scope; trainers see only their own trainees.
// A list is not a read of each person on it: opening one course (progress.$workerId.$deviceTypeId) is the
// read the access log records.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "progress.read");
  return { courses: await listCoursesInScope(p) };
}

const STATUS: Record<string, string> = { training: "Training", paused: "Paused", proficient: "Proficient" };

export default function ProgressIndex({ loaderData }: Route.ComponentProps) {
  const { courses } = loaderData;
  return (
    <div className="grid gap-4">
      <div>
        <h1 className="page-title">Training progress</h1>
        <p className="text-ink-soft">
          Open a course to see its progress curve, the remaining-hours forecast and to log a session.
        </p>
      </div>
      <div className="card overflow-x-auto p-0">
        <table className="table-base">
          <caption className="sr-only">Courses</caption>
          <thead>
            <tr>
              <th scope="col">Worker</th>
              <th scope="col">Device type</th>
              <th scope="col">Status</th>
              <th scope="col">Hours so far</th>
              <th scope="col">Remaining (median)</th>
            </tr>
          </thead>
          <tbody>
            {courses.length === 0 && (
              <tr>
                <td colSpan={5}>No courses in your scope.</td>
              </tr>
            )}
            {courses.map((c) => (
              <tr key={`${c.workerId}-${c.deviceTypeId}`}>
                <td>
                  <Link
                    className="font-medium text-spruce-700 underline"
                    to={`/progress/${c.workerId}/${c.deviceTypeId}`}
                  >
                    {c.employeeNumber} · {c.name}
                  </Link>
                </td>
                <td>{c.deviceType}</td>
                <td>{STATUS[c.status] ?? c.status}</td>
                <td>{c.cumulativeHours.toFixed(1)} h</td>
                <td>
                  {c.progressStatus === "review" ? (
                    <span className="text-alert">review: plateau</span>
                  ) : c.status === "proficient" ? (
                    "—"
                  ) : c.remainingHours != null ? (
                    `${c.remainingHours.toFixed(1)} h`
                  ) : (
                    "—"
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
