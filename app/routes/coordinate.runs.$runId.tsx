import { invariantResponse } from "@epic-web/invariant";
import {
  type ColumnDef,
  flexRender,
  getCoreRowModel,
  getSortedRowModel,
  type SortingState,
  useReactTable,
} from "@tanstack/react-table";
import { useEffect, useState } from "react";
import { Form, Link, useFetcher, useNavigation, useRevalidator } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { CapacityExplorer } from "~/components/capacity-chart";
import { DeviceCautions } from "~/components/device-cautions";
import { ActionForm, CheckboxField, FieldMessage, FormError, Notice } from "~/components/fields";
import { ProgressBar } from "~/components/progress-bar";
import { formAction } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import { setArchived } from "~/models/allocation-runs.server";
import { publishRun } from "~/models/publish.server";
import { runResultView, type WorkerPlanRow } from "~/models/run-result.server";
import { runPageSchema } from "~/schemas/allocation";
import { percentileLabel } from "~/schemas/forecast";
import type { Route } from "./+types/coordinate.runs.$runId";

export const meta: Route.MetaFunction = ({ params }) => [{ title: `Allocation run #${params.runId} · Limberly` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "allocation.run");
  const view = await runResultView(p, Number(params.runId));
  invariantResponse(view, "No such allocation run in your scope.", { status: 404 });
  await recordAccess(p, request, view.shownWorkerIds, "plan");
  return view;
}

export async function action({ request, params }: Route.ActionArgs) {
  const form = await request.formData();
  // archiving is part of running and comparing runs; publishing needs the publish permission
  const p = await requireUser(request, form.get("intent") === "archive" ? "allocation.run" : "allocation.publish");
  return formAction(form, runPageSchema, async (v) => {
    if (v.intent === "archive") {
      await setArchived(p, Number(params.runId), v.archived === "yes");
      return {
        notice: v.archived === "yes" ? "Archived: the runs list hides this run." : "Back in the runs list.",
        payload: undefined,
      };
    }
    const published = await publishRun(p, Number(params.runId), v.expectedPlanVersion);
    return { notice: `Published as plan version ${published.version}.`, payload: published };
  });
}

const columns: ColumnDef<WorkerPlanRow>[] = [
  {
    id: "worker",
    accessorFn: (r) => r.employeeNumber,
    header: "Worker",
    cell: ({ row }) => (
      <span className="whitespace-nowrap">
        {row.original.employeeNumber} · {row.original.name}
      </span>
    ),
  },
  { id: "department", accessorKey: "department", header: "Department" },
  { id: "device", accessorKey: "deviceType", header: "Device type" },
  { id: "trainers", accessorKey: "trainers", header: "Trainer(s)" },
  {
    id: "hoursPerWeek",
    accessorKey: "hoursPerWeek",
    header: "Hours per week",
    enableSorting: false,
    cell: ({ getValue }) => <span className="text-sm">{String(getValue())}</span>,
  },
  {
    id: "hours",
    accessorKey: "hoursNeeded",
    header: "Hours needed",
    cell: ({ getValue }) => `${Number(getValue()).toFixed(1)} h`,
  },
  { id: "priority", accessorKey: "priority", header: "Priority" },
  {
    id: "completion",
    accessorKey: "completionWeek",
    header: "Ready in week",
    cell: ({ row }) => (
      <span className="whitespace-nowrap">
        {row.original.completionWeek} <span className="text-ink-soft">({row.original.completionDate})</span>
      </span>
    ),
  },
];

function PlanTable({ rows }: { rows: WorkerPlanRow[] }) {
  const [sorting, setSorting] = useState<SortingState>([{ id: "completion", desc: false }]);
  const table = useReactTable({
    data: rows,
    columns,
    state: { sorting },
    onSortingChange: setSorting,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
  });
  return (
    <section className="card overflow-x-auto p-0" tabIndex={0} aria-label="Per-worker plan (scrolls sideways)">
      <table className="table-base" data-testid="plan-table">
        <caption className="sr-only">
          Per-worker plan: device type, trainers, hours per week and the week each worker is ready
        </caption>
        <thead>
          {table.getHeaderGroups().map((hg) => (
            <tr key={hg.id}>
              {hg.headers.map((h) => {
                const sorted = h.column.getIsSorted();
                return (
                  <th
                    key={h.id}
                    scope="col"
                    aria-sort={sorted ? (sorted === "asc" ? "ascending" : "descending") : undefined}
                  >
                    {h.column.getCanSort() ? (
                      <button
                        type="button"
                        className="inline-flex min-h-11 items-center gap-1 font-semibold underline-offset-2 hover:underline"
                        onClick={h.column.getToggleSortingHandler()}
                      >
                        {flexRender(h.column.columnDef.header, h.getContext())}
                        <span aria-hidden="true">{sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "↕"}</span>
                      </button>
                    ) : (
                      flexRender(h.column.columnDef.header, h.getContext())
                    )}
                  </th>
                );
              })}
            </tr>
          ))}
        </thead>
        <tbody>
          {table.getRowModel().rows.map((r) => (
            <tr key={r.id}>
              {r.getVisibleCells().map((c) => (
                <td key={c.id}>{flexRender(c.column.columnDef.cell, c.getContext())}</td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </section>
  );
}

function Progress({
  runId,
  initial,
}: {
  runId: number;
  initial: { status: string; fraction: number; phase: string | null };
}) {
  const fetcher = useFetcher<{ status: string; fraction: number; phase: string | null }>();
  const revalidator = useRevalidator();
  const current = fetcher.data ?? initial;
  // biome-ignore lint/correctness/useExhaustiveDependencies: re-arms on each new status report and on the fetcher's state; fetcher and revalidator are new objects on every render and must not re-arm it.
  useEffect(() => {
    if (current.status === "done" || current.status === "failed") {
      if (revalidator.state === "idle") void revalidator.revalidate();
      return;
    }
    const t = setTimeout(() => {
      if (fetcher.state === "idle") fetcher.load(`/coordinate/runs/${runId}/status`);
    }, 700);
    return () => clearTimeout(t);
  }, [current.status, current.fraction, current.phase, fetcher.state]);
  return (
    <div className="card grid gap-2" aria-live="polite">
      <ProgressBar
        label={current.status === "queued" ? "Waiting for the solver" : "Solving"}
        fraction={current.fraction}
        phase={current.phase}
      />
      <p className="text-sm text-ink-soft">The solver runs in the background; this page updates by itself.</p>
    </div>
  );
}

export default function RunPage({ loaderData, actionData }: Route.ComponentProps) {
  const {
    run,
    result,
    disruption,
    poolSize,
    excluded,
    notes,
    rows,
    unassigned,
    usage,
    preview,
    planVersion,
    currentRunId,
    refusal,
    canPublish,
    others,
  } = loaderData;
  const nav = useNavigation();
  const published = actionData?.intent === "publish" ? actionData.payload : undefined;
  const pr = run.parameters;
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link className="text-spruce-700 underline" to="/coordinate/runs">
            Allocation runs
          </Link>
        </p>
        <h1 className="page-title">
          Run #{run.id}
          {run.label ? ` · ${run.label}` : ""}
        </h1>
        <p className="text-ink-soft">
          Start {pr.startDate}, {pr.horizonWeeks} weeks · planning figure: the {percentileLabel(pr.planningQuantile)} ·
          fairness share {Math.round(pr.fairnessShare * 100)} %
          {pr.pool.includeProficientElsewhere ? " · includes workers proficient elsewhere" : ""}
          {run.baseRunId ? (
            <>
              {" "}
              · what-if of{" "}
              <Link className="underline" to={`/coordinate/runs/${run.baseRunId}`}>
                run #{run.baseRunId}
              </Link>
            </>
          ) : null}
          {run.createdBy ? ` · started by ${run.createdBy}` : ""}
        </p>
        {run.status !== "queued" && run.status !== "running" && (
          <ActionForm intent="archive" result={actionData} className="mt-2 flex flex-wrap items-center gap-2">
            <input type="hidden" name="archived" value={run.archivedAt ? "no" : "yes"} />
            {run.archivedAt && <span className="text-sm">Archived on {run.archivedAt.slice(0, 10)}.</span>}
            <button className="btn-quiet" type="submit">
              {run.archivedAt ? "Put back in the runs list" : "Archive this run"}
            </button>
          </ActionForm>
        )}
      </div>

      {(run.status === "queued" || run.status === "running") && (
        <Progress runId={run.id} initial={{ status: run.status, fraction: run.fraction, phase: run.phase }} />
      )}
      {run.status === "failed" && <FormError message={`The run failed: ${run.error ?? "unknown error"}`} />}

      {result && (
        <>
          <section aria-labelledby="outcome" className="card grid gap-2" data-testid="decision">
            <h2 id="outcome" className="text-lg font-semibold">
              Result: who is ready when
            </h2>
            {result.status === "infeasible" ? (
              <p>No plan meets this run's conditions. {result.message}</p>
            ) : (
              <>
                <p className="text-xl">
                  <strong>{rows.length}</strong> of {poolSize} people in the pool can be ready within {pr.horizonWeeks}{" "}
                  weeks from {pr.startDate}
                  {rows.length > 0
                    ? `, the first in week ${Math.min(...rows.map((r) => r.completionWeek))} and the last in week ${Math.max(...rows.map((r) => r.completionWeek))}`
                    : ""}
                  .
                </p>
                <p>
                  {unassigned.length > 0 ? `${unassigned.length} are not ready in this horizon (reasons below). ` : ""}
                  {preview.continuing.total > 0
                    ? `${preview.continuing.total} already in training continue first; ${preview.continuing.finishing} of them finish in this horizon. `
                    : ""}
                  {result.binding.length > 0
                    ? `What holds the plan back most: ${result.binding[0]}`
                    : "No device or trainer time holds the plan back."}
                </p>
                {result.gap != null && (
                  <p className="text-sm text-ink-soft">
                    {result.gap <= 0.0005
                      ? "No plan can make a more valuable set of people ready: this one is the best possible."
                      : `No plan can be more than ${(result.gap * 100).toFixed(1)} % more valuable than this one.`}
                  </p>
                )}
              </>
            )}
            {result.message && result.status !== "infeasible" && <Notice>{result.message}</Notice>}
          </section>

          {disruption && (
            <section aria-labelledby="disruption" className="card grid gap-2" data-testid="disruption">
              <h2 id="disruption" className="text-lg font-semibold">
                Changes to the published plan
              </h2>
              <p>
                <strong>{disruption.kept.length}</strong>{" "}
                {disruption.kept.length === 1 ? "person keeps" : "people keep"} their published sessions unchanged;{" "}
                <strong>{disruption.moved.length}</strong>{" "}
                {disruption.moved.length === 1 ? "person's sessions move" : "people's sessions move"}. Moving one
                person's sessions was counted as costing as much as one more person ready with priority{" "}
                {disruption.keepWeight}. Publishing e-mails only the people whose sessions change.
              </p>
              {disruption.moved.length > 0 && (
                <section className="overflow-x-auto" tabIndex={0} aria-label="Who moves (scrolls sideways)">
                  <table className="table-base">
                    <caption className="sr-only">People whose published sessions move, and why</caption>
                    <thead>
                      <tr>
                        <th scope="col">Moves</th>
                        <th scope="col">Why</th>
                      </tr>
                    </thead>
                    <tbody>
                      {disruption.moved.map((m) => (
                        <tr key={m.workerId}>
                          <td>{m.name}</td>
                          <td>{m.reason}</td>
                        </tr>
                      ))}
                    </tbody>
                  </table>
                </section>
              )}
              {disruption.kept.length > 0 && (
                <details>
                  <summary className="cursor-pointer">Who keeps their sessions ({disruption.kept.length})</summary>
                  <ul className="mt-1 list-disc pl-5">
                    {disruption.kept.map((k) => (
                      <li key={k.workerId}>
                        {k.name} ({k.sessions} session{k.sessions === 1 ? "" : "s"})
                      </li>
                    ))}
                  </ul>
                </details>
              )}
            </section>
          )}

          <section aria-labelledby="publish" className="card grid gap-3">
            <h2 id="publish" className="text-lg font-semibold">
              Publish
            </h2>
            <p>
              Publishing turns this plan into dated sessions (day, time, device unit, trainer) inside the trainers'
              working hours and the units' bookable hours, replaces the scheduled sessions from {pr.startDate} on of the
              people this run plans{currentRunId ? ` (the published plan is from run #${currentRunId})` : ""}, and
              e-mails a calendar file to each worker and trainer whose sessions change.
            </p>
            <dl className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="publish-summary">
              <div>
                <dt className="text-sm text-ink-soft">Ready after placing sessions</dt>
                <dd className="text-xl font-semibold" data-testid="ready-after-placement">
                  {rows.length}
                </dd>
                {preview.plannedBySolver !== rows.length && (
                  <dd className="text-sm text-ink-soft">
                    of {preview.plannedBySolver} in the weekly plan; {preview.plannedBySolver - rows.length} not ready
                    in this horizon
                  </dd>
                )}
              </div>
              <div>
                <dt className="text-sm text-ink-soft">Sessions</dt>
                <dd className="text-xl font-semibold">{preview.sessions}</dd>
                <dd className="text-sm text-ink-soft">replacing {preview.replaces} scheduled</dd>
              </div>
              <div>
                <dt className="text-sm text-ink-soft">Already in training, continuing</dt>
                <dd className="text-xl font-semibold">{preview.continuing.total}</dd>
                <dd className="text-sm text-ink-soft">{preview.continuing.finishing} finish in this horizon</dd>
              </div>
              {preview.recipients && (
                <div>
                  <dt className="text-sm text-ink-soft">Will be e-mailed</dt>
                  <dd className="text-xl font-semibold" data-testid="will-be-emailed">
                    {preview.recipients.workers + preview.recipients.trainers}
                  </dd>
                  <dd className="text-sm text-ink-soft">
                    {preview.recipients.workers} workers, {preview.recipients.trainers} trainers whose sessions change
                    {preview.withoutEmail ? `; ${preview.withoutEmail} without an e-mail address` : ""}
                  </dd>
                </div>
              )}
            </dl>
            {preview.slipped.length > 0 && (
              <details className="text-sm">
                <summary className="cursor-pointer">
                  {preview.slipped.length} workers finish later than planned because hours moved to a later week
                </summary>
                <ul className="list-disc pl-5">
                  {preview.slipped.map((x) => (
                    <li key={x}>{x}</li>
                  ))}
                </ul>
              </details>
            )}
            {preview.unplaced.length > 0 && (
              <details className="text-sm">
                <summary className="cursor-pointer">
                  {preview.unplaced.length} blocks of hours could not be placed on the calendar
                </summary>
                <ul className="list-disc pl-5">
                  {preview.unplaced.map((u, i) => (
                    // biome-ignore lint/suspicious/noArrayIndexKey: a fixed list per preview, never reordered
                    <li key={i}>
                      {u.name}: {u.hours} h — {u.reason}
                    </li>
                  ))}
                </ul>
              </details>
            )}
            {published && (
              <Notice>
                Published as plan version {published.version}: {published.sessions} sessions. E-mailed{" "}
                {published.notified.length} people whose sessions changed (
                {published.notified.filter((n) => n.kind === "worker").length} workers,{" "}
                {published.notified.filter((n) => n.kind === "trainer").length} trainers); {published.unchanged}{" "}
                unchanged, not e-mailed.
                {published.mailFailures.length ? ` ${published.mailFailures.length} e-mails could not be sent.` : ""}{" "}
                <Link className="text-spruce-700 underline" to="/coordinate/schedule">
                  Open the published schedule
                </Link>
              </Notice>
            )}
            {run.publishedAt && (
              <p className="text-sm">
                This run was published as version {run.publishedPlanVersion} on{" "}
                {run.publishedAt.slice(0, 16).replace("T", " ")}
                {run.publishedBy ? ` by ${run.publishedBy}` : ""}.
              </p>
            )}
            {refusal ? (
              <p className="text-sm text-ink-soft">{refusal}</p>
            ) : canPublish ? (
              <ActionForm intent="publish" result={actionData} className="grid gap-2">
                <input type="hidden" name="expectedPlanVersion" value={planVersion} />
                <FieldMessage name="expectedPlanVersion" />
                <CheckboxField
                  name="confirm"
                  value="yes"
                  required
                  label={`I have checked the numbers: ${rows.length} people ready after placing sessions${
                    preview.recipients
                      ? `, ${preview.recipients.workers + preview.recipients.trainers} people will be e-mailed`
                      : ""
                  }.`}
                />
                <p>
                  <button className="btn-primary" type="submit" disabled={nav.state === "submitting"}>
                    {nav.state === "submitting"
                      ? "Publishing…"
                      : run.publishedAt
                        ? "Publish again"
                        : "Publish this plan"}
                  </button>
                </p>
              </ActionForm>
            ) : (
              <p className="text-sm">Only a coordinator with publish permission can publish.</p>
            )}
            <p className="text-sm">
              <Link className="text-spruce-700 underline" to="/coordinate/schedule">
                The published schedule
              </Link>{" "}
              ·{" "}
              <a className="text-spruce-700 underline" href="/coordinate/schedule.xlsx">
                download it (XLSX)
              </a>
            </p>
          </section>
          <details className="card text-sm" data-testid="how-computed">
            <summary className="cursor-pointer font-semibold">How this was computed (exact terms)</summary>
            <dl className="mt-2 grid grid-cols-2 gap-3 md:grid-cols-5" data-testid="run-summary">
              <div>
                <dt className="text-ink-soft">Solver status</dt>
                <dd className="font-semibold">{result.status}</dd>
              </div>
              <div>
                <dt className="text-ink-soft">Objective</dt>
                <dd className="font-semibold">{result.objective.toFixed(1)}</dd>
              </div>
              <div>
                <dt className="text-ink-soft">Proven bound</dt>
                <dd className="font-semibold">{result.bound.toFixed(1)}</dd>
              </div>
              <div>
                <dt className="text-ink-soft">Gap</dt>
                <dd className="font-semibold">{result.gap == null ? "—" : `${(result.gap * 100).toFixed(1)} %`}</dd>
              </div>
              <div>
                <dt className="text-ink-soft">Ready after placement / pool</dt>
                <dd className="font-semibold">
                  {rows.length} / {poolSize}
                </dd>
              </div>
            </dl>
            <ul className="mt-2 list-disc pl-5">
              <li>
                Objective = the sum of the priorities (priority points) of the workers the weekly plan makes ready
                inside the horizon; the value in the runs list counts only those ready after placing sessions.
              </li>
              <li>
                The bound is proven: no plan can do better than it, so the gap = (bound − objective) ÷ bound says how
                far from the best possible this plan can at most be.
              </li>
              <li>
                "One more hour … is worth" comes from the solver's dual prices (shadow prices of the capacity rows):
                first-order estimates, good for comparing resources, not exact promises.
              </li>
            </ul>
          </details>

          <section aria-labelledby="binding" className="card grid gap-2">
            <h2 id="binding" className="text-lg font-semibold">
              What limits the plan
            </h2>
            {result.status === "infeasible" ? (
              <p>
                No plan meets the run's conditions (see the reason above). Lower the fairness share, lengthen the
                horizon or add capacity, then start a new run.
              </p>
            ) : result.binding.length === 0 ? (
              <p>
                No device or trainer time binds: every worker in the pool who can be made ready is ready. Extra capacity
                would not change this plan.
              </p>
            ) : (
              <div data-testid="binding-resources">
                <ul className="list-disc pl-5">
                  {result.binding.slice(0, 5).map((b) => (
                    <li key={b}>{b}</li>
                  ))}
                </ul>
                {result.binding.length > 5 && (
                  <details className="mt-1">
                    <summary className="cursor-pointer text-sm text-spruce-700">
                      {result.binding.length - 5} more, week by week
                    </summary>
                    <ul className="list-disc pl-5 text-sm">
                      {result.binding.slice(5).map((b) => (
                        <li key={b}>{b}</li>
                      ))}
                    </ul>
                  </details>
                )}
              </div>
            )}
            <p className="text-sm text-ink-soft">
              What one more hour of a resource is worth is an estimate, good for comparing resources, not a promise.
            </p>
          </section>

          <section aria-labelledby="plan" className="grid gap-2">
            <h2 id="plan" className="text-lg font-semibold">
              Per-worker plan ({rows.length})
            </h2>
            {rows.length ? (
              <PlanTable rows={rows} />
            ) : (
              <p className="text-ink-soft">Nobody can be made ready in this horizon.</p>
            )}
          </section>

          {unassigned.length > 0 && (
            <section aria-labelledby="unassigned" className="card grid gap-2">
              <h2 id="unassigned" className="text-lg font-semibold">
                Not ready in this horizon ({unassigned.length})
              </h2>
              <ul className="grid gap-1 text-sm" data-testid="unassigned">
                {unassigned.map((u) => (
                  <li key={u.employeeNumber + u.name}>
                    <strong>
                      {u.employeeNumber} · {u.name}
                    </strong>
                    : {u.reason}
                  </li>
                ))}
              </ul>
            </section>
          )}

          <section aria-labelledby="capacity" className="grid gap-3">
            <h2 id="capacity" className="text-lg font-semibold">
              Capacity use per week
            </h2>
            <CapacityExplorer resources={usage} />
          </section>
        </>
      )}

      <section aria-labelledby="whatif" className="card grid gap-2">
        <h2 id="whatif" className="text-lg font-semibold">
          What if…
        </h2>
        <p>
          <Link className="btn-quiet" to={`/coordinate/runs?from=${run.id}`}>
            Start a what-if from this run
          </Link>
        </p>
        {others.length > 0 && (
          <Form method="get" action="/coordinate/runs/compare" className="flex flex-wrap items-end gap-2">
            <input type="hidden" name="a" value={run.id} />
            <div>
              <label htmlFor="compare-b" className="field-label">
                Compare with run
              </label>
              <select id="compare-b" name="b" className="field-input">
                {others.map((o) => (
                  <option key={o.id} value={o.id}>
                    #{o.id} · {o.label}
                  </option>
                ))}
              </select>
            </div>
            <button className="btn-quiet" type="submit">
              Compare side by side
            </button>
          </Form>
        )}
      </section>

      {(excluded.length > 0 || notes.length > 0) && (
        <section aria-labelledby="how" className="card grid gap-2 text-sm">
          <h2 id="how" className="text-lg font-semibold">
            How the numbers were made
          </h2>
          <ul className="list-disc pl-5">
            {notes.map((n) => (
              <li key={n}>{n}</li>
            ))}
          </ul>
          {excluded.length > 0 && (
            <details>
              <summary className="cursor-pointer">
                {excluded.length} workers in the chosen sites left out of the pool, with the reason
              </summary>
              <ul className="mt-1 list-disc pl-5">
                {excluded.map((e) => (
                  <li key={e.workerId}>
                    {e.name}: {e.reason}
                  </li>
                ))}
              </ul>
            </details>
          )}
        </section>
      )}
      <DeviceCautions />
    </div>
  );
}
