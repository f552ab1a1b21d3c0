import { Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import { requireUser } from "~/auth/guard.server";
import { countUpload } from "~/auth/throttle.server";
import { ActionForm } from "~/components/fields";
import { FileField } from "~/components/upload";
import { formatInstant } from "~/dates";
import { type UploadField, uploadAction } from "~/forms.server";
import { keepRetryAfter } from "~/http/headers";
import { recentRosterUploads, saveRosterUpload } from "~/models/roster.server";
import { viewerTimeZone } from "~/models/sites.server";
import { MAX_ROSTER_BYTES, MAX_ROSTER_ROWS, ROSTER_FILE_FIELD } from "~/schemas/roster";
import type { Route } from "./+types/assess.roster._index";

export const meta: Route.MetaFunction = () => [{ title: "Roster import · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "roster.import");
  const zone = await viewerTimeZone(p);
  const recent = await recentRosterUploads(p.user.id);
  return {
    recent: recent.map((u) => ({
      ...u,
      when: u.finishedAt
        ? `${u.status} ${formatInstant(u.finishedAt, zone)}`
        : `uploaded ${formatInstant(u.createdAt, zone)}`,
    })),
  };
}

// A refused upload (429) keeps its Retry-After on the `.data` answer.
export const headers = keepRetryAfter;

const ROSTER_UPLOAD: UploadField = {
  name: ROSTER_FILE_FIELD,
  label: "Roster file",
  maxBytes: MAX_ROSTER_BYTES,
  onlyField: true,
};

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "roster.import");
  await countUpload(request, p.user.id);
  // Refusals (size, zip limits, unreadable file, reading slots taken) name the limit; nothing was saved.
  return uploadAction(request, ROSTER_UPLOAD, z.object({}), async (_, file) => {
    throw redirect(`/assess/roster/${await saveRosterUpload(p, file)}`);
  });
}

export default function RosterHome({ loaderData, actionData }: Route.ComponentProps) {
  const busy = useNavigation().state === "submitting";
  return (
    <div className="grid gap-6">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1 className="page-title">Roster import</h1>
          <p className="text-ink-soft">
            Upload the employer's roster as CSV or XLSX. You map the columns and see every bad row before anything is
            written; workers are matched by employee number.
          </p>
        </div>
        <a className="btn-quiet" href="/assess/roster/export.xlsx">
          Export roster (XLSX)
        </a>
      </div>
      <section className="card" aria-labelledby="up-h">
        <h2 id="up-h" className="text-lg font-semibold">
          1. Upload
        </h2>
        <p className="text-sm text-ink-soft">
          Columns needed: employee number, given name, family name, site (code or name), department (code or name);
          e-mail optional. First row = column names. At most {MAX_ROSTER_ROWS.toLocaleString("en")} rows.
        </p>
        <ActionForm result={actionData} encType="multipart/form-data" className="mt-3 grid gap-3">
          <FileField
            name={ROSTER_UPLOAD.name}
            label={ROSTER_UPLOAD.label}
            accept=".csv,.xlsx"
            maxBytes={MAX_ROSTER_BYTES}
            required
          />
          <div>
            <button type="submit" className="btn-primary" disabled={busy}>
              {busy ? "Reading…" : "Upload and map columns"}
            </button>
          </div>
        </ActionForm>
      </section>
      <section className="card" aria-labelledby="recent-h">
        <h2 id="recent-h" className="text-lg font-semibold">
          Your recent imports
        </h2>
        {loaderData.recent.length === 0 ? (
          <p className="text-ink-soft">None yet.</p>
        ) : (
          <ul className="mt-2 grid gap-2">
            {loaderData.recent.map((u) => (
              <li key={u.id} className="flex flex-wrap justify-between gap-2 border-b border-line pb-2">
                <Link to={`/assess/roster/${u.id}`} className="font-medium text-spruce-700 underline">
                  {u.filename}
                </Link>
                <span className="text-sm text-ink-soft">
                  {`${u.rowCount} rows · ${u.when}`}
                  {u.summary
                    ? ` · ${u.summary.created} new, ${u.summary.updated} updated, ${u.summary.unchanged} unchanged, ${u.summary.skipped} skipped`
                    : ""}
                </span>
              </li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}
