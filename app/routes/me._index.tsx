import { data } from "react-router";
import type { Route } from "./+types/me._index";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { STAGE_LABELS, type Stage } from "~/components/stage";
import { ownWorkerRecord } from "~/models/workers.server";

export const meta: Route.MetaFunction = () => [{ title: "My plan and data · Limberly" }];

const PURPOSES: { key: string; label: string }[] = [
  { key: "assessment", label: "Baseline assessment may be recorded" },
  { key: "planning", label: "My forecast may be used to plan training" },
  { key: "model", label: "My de-identified record may help fit forecast models" },
];

// A worker sees only their own record: the id comes from their session, never from the URL.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "self.read");
  if (!p.user.workerId) throw data({ error: "Your account is not linked to a worker record. Ask your occupational health team." }, { status: 404 });
  const record = await ownWorkerRecord(p.user.workerId);
  if (!record) throw data({ error: "Your worker record was not found." }, { status: 404 });
  return { record };
}

export default function MeHome({ loaderData }: Route.ComponentProps) {
  const { record } = loaderData;
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title" data-testid="role-home">My plan and data</h1>
        <p className="text-ink-soft">{record.name} · {record.employeeNumber} · {record.department}, {record.site}</p>
      </div>
      <section className="card" aria-labelledby="stage">
        <h2 id="stage" className="font-semibold">Where I am</h2>
        <p className="mt-1 text-xl">{STAGE_LABELS[record.stage as Stage] ?? record.stage}</p>
      </section>
      <section className="card" aria-labelledby="consent">
        <h2 id="consent" className="font-semibold">My consent</h2>
        <ul className="mt-2 divide-y divide-line">
          {PURPOSES.map((p) => {
            const c = record.consent[p.key];
            return (
              <li key={p.key} className="flex flex-wrap justify-between gap-2 py-2">
                <span>{p.label}</span>
                <span className={c?.status === "given" ? "font-medium text-spruce-700" : "text-ink-soft"}>
                  {c ? `${c.status === "given" ? "Given" : "Withdrawn"} ${c.at.slice(0, 10)} (text v${c.version})` : "Not asked yet"}
                </span>
              </li>
            );
          })}
        </ul>
      </section>
      <DeviceCautions />
    </div>
  );
}
