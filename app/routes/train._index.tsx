import type { Route } from "./+types/train._index";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { trainerProfileForUser } from "~/models/fleet.server";

export const meta: Route.MetaFunction = () => [{ title: "My training days · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "sessions.own");
  return { name: p.user.displayName, profile: await trainerProfileForUser(p.user.id) };
}

export default function TrainHome({ loaderData }: Route.ComponentProps) {
  const { name, profile } = loaderData;
  return (
    <div className="grid gap-6">
      <h1 className="page-title" data-testid="role-home">My training days</h1>
      {profile ? (
        <section className="card">
          <p className="font-semibold">{name} · {profile.site}</p>
          <p className="text-ink-soft">{profile.hoursPerWeek} hours a week · up to {profile.traineesPerSession} trainee{profile.traineesPerSession > 1 ? "s" : ""} per session</p>
          <h2 className="mt-3 font-semibold">Certified to train</h2>
          <ul className="list-disc pl-5">{profile.certifications.map((c) => <li key={c.name}>{c.name} (since {c.since})</li>)}</ul>
        </section>
      ) : <p className="card">You have the trainer role but no trainer profile yet. Ask your training coordinator to add you.</p>}
      <p className="card text-ink-soft">No sessions are scheduled for you yet. Sessions appear here once a coordinator publishes a training plan.</p>
      <DeviceCautions compact />
    </div>
  );
}
