import type { Scope } from "~/auth/scope";
import type { AllocationProblem } from "~/compute/allocation";
import { bookCommitments, type Commitment, type CommittedPlan } from "~/compute/commitments";
import { addDays, inRange, isoWeekday, minutesOf, weekDates } from "~/compute/plan-calendar";
import { plannedHoursFromLogScale } from "~/compute/regression";
import type { ReplanDecision } from "~/compute/replan";
import type { CalendarUnit, PlanCalendar } from "~/compute/session-packing";
import { breakRuleOf, deviceHoursInWeek, trainerHoursInWeek } from "~/compute/session-rules";
import { hhmmOfWallClock, startOfDay, wallClock } from "~/dates";
import { type Db, db, type Row } from "~/db.server";
import type { RunParameters } from "~/schemas/allocation";
import { noForecastText, percentileLabel } from "~/schemas/forecast";
import { latestConsent } from "./consent.server";
import { type ApprovedModel, baselineZScores, loadApprovedModel, planningQuantile } from "./forecast.server";
import { siteCalendars } from "./site-calendar.server";
import { whereWorkerInScope, workersWithPlace } from "./workers.server";

// Builds the solver input (docs/methods.md) for a run from the database: the pool, device-type capacity per week
// (units × bookable hours, less maintenance and closure days, within the site's working hours) and trainer hours
// per week (weekly working pattern cut to the site's working hours, less leave and closures, less the breaks the
// trainer's rule needs), with the run's what-if changes applied. The second stage packs against the same rules
// (app/compute/session-rules.ts), so the two stages agree. The solver works per device type AT A SITE, since a worker
// trains at their own site with a trainer of that site; ids are the readable names people see.

export interface ProblemSnapshot {
  problem: AllocationProblem;
  calendar: PlanCalendar;
  /** how each number was made, in plain words (shown with the result) */
  notes: string[];
  /** workers in the chosen pool who could not enter the solve, with a plain reason */
  excluded: { workerId: number; name: string; reason: string }[];
  /**
   * Workers already in training: fixed commitments booked before the solve (app/compute/commitments.ts); the
   * problem's capacities are what is left after them. Absent in snapshots made before commitments existed.
   */
  commitments?: CommittedPlan[];
  /** a run from the published plan: who may keep their sessions, who must move and why (app/compute/replan.ts) */
  replan?: ReplanDecision;
  /**
   * The organisation's planning quantile the hours needed were taken at (a share, 0.80): every run plans at that
   * one setting. Absent in snapshots made before; their run's parameters hold it.
   */
  planningQuantile?: number;
}

const WORKDAYS = 5;

export async function buildProblem(
  params: RunParameters,
  scope: Scope,
  k: Db = db(),
): Promise<ProblemSnapshot & { planningQuantile: number }> {
  const { startDate, horizonWeeks: weeks } = params;
  const quantile = await planningQuantile(k);
  const endDate = addDays(startDate, weeks * 7 - 1);
  const allDates = Array.from({ length: weeks }, (_, w) => weekDates(startDate, w)).flat();
  const notes: string[] = [];

  const sites = await k("sites").select("id", "name").orderBy("id");
  const siteName = new Map(sites.map((s) => [s.id, s.name]));
  const allowedSite = (siteId: number) => scope.allSites || scope.siteIds.includes(siteId);
  const poolSites = params.pool.siteIds.length
    ? params.pool.siteIds.filter(allowedSite)
    : sites.map((s) => s.id).filter(allowedSite);
  const deviceTypes = await k("device_types")
    .select(
      "id",
      "name",
      "wear_time_limit_minutes",
      "default_max_hours_per_week",
      "min_session_minutes",
      "max_session_minutes",
    )
    .orderBy("id");
  const sitesCal = await siteCalendars(poolSites, startDate, endDate, k);

  // Devices per site and device type.
  const units = await k("device_units")
    .whereIn("site_id", poolSites.length ? poolSites : [-1])
    .select("id", "device_type_id", "site_id", "serial", "status", "bookable_hours_per_week")
    .orderBy(["serial", "id"]);
  const windows = await k("unit_maintenance_windows")
    .whereIn("device_unit_id", units.map((u) => u.id).concat(-1))
    .where("starts_on", "<=", endDate)
    .where("ends_on", ">=", startDate)
    .select("device_unit_id", "starts_on", "ends_on")
    .orderBy(["device_unit_id", "starts_on", "id"]);
  const deviceId = (dtName: string, site: string) => `${dtName} at ${site}`;
  const calendarDevices: PlanCalendar["devices"] = [];
  const problemDevices: AllocationProblem["deviceTypes"] = [];
  for (const siteId of poolSites) {
    for (const dt of deviceTypes) {
      const site = siteName.get(siteId)!;
      const id = deviceId(dt.name, site);
      const mine = units.filter((u) => u.site_id === siteId && u.device_type_id === dt.id && u.status === "in_service");
      const calUnits: CalendarUnit[] = mine.map((u) => ({
        unitId: u.id,
        serial: u.serial,
        bookableHoursPerWeek: Number(u.bookable_hours_per_week),
        unavailableDates: allDates.filter((d) =>
          windows.some((w) => w.device_unit_id === u.id && inRange(d, w.starts_on, w.ends_on)),
        ),
      }));
      for (const add of params.whatIf.addUnits.filter((a) => a.siteId === siteId && a.deviceTypeId === dt.id)) {
        for (let i = 0; i < add.count; i++)
          calUnits.push({
            unitId: null,
            serial: `what-if unit ${i + 1}`,
            bookableHoursPerWeek: add.bookableHoursPerWeek,
            unavailableDates: [],
          });
        notes.push(
          `What-if: ${add.count} extra ${dt.name} unit${add.count > 1 ? "s" : ""} at ${site}, ${add.bookableHoursPerWeek} bookable h/week each.`,
        );
      }
      const hoursPerWeek = Array.from({ length: weeks }, (_, w) =>
        deviceHoursInWeek({ startDate, sites: sitesCal }, { site, units: calUnits }, w),
      );
      calendarDevices.push({
        id,
        deviceTypeId: dt.id,
        siteId,
        name: dt.name,
        site,
        wearTimeLimitMinutes: Number(dt.wear_time_limit_minutes),
        minSessionMinutes: Number(dt.min_session_minutes),
        maxSessionMinutes: Number(dt.max_session_minutes),
        units: calUnits,
      });
      problemDevices.push({ id, hoursPerWeek });
    }
  }
  notes.push(
    "Device hours per week = for each unit in service, its bookable hours × the share of the site's working days (Mon–Fri where the site has no working hours on file) it is neither closed nor in a maintenance window, at most the site's working hours on those days.",
  );
  for (const c of sitesCal) {
    if (c.closures.length)
      notes.push(
        `${c.site} is closed on ${c.closures.map((x) => `${x.startsOn === x.endsOn ? x.startsOn : `${x.startsOn} to ${x.endsOn}`} (${x.reason})`).join(", ")}: no sessions on those days.`,
      );
    if (!c.hours)
      notes.push(`${c.site} has no working hours on file: Monday to Friday, inside the trainers' own hours.`);
  }

  // Trainers at the pool's sites.
  const trainerRows = await k("trainers as t")
    .join("users as u", "u.id", "t.user_id")
    .whereIn("t.site_id", poolSites.length ? poolSites : [-1])
    .select(
      "t.id",
      "t.site_id",
      "t.hours_per_week",
      "t.trainees_per_session",
      "t.max_continuous_minutes",
      "t.break_minutes",
      "u.display_name",
      "u.email",
    )
    .orderBy(["u.display_name", "t.id"]);
  const tIds = trainerRows.map((t) => t.id as number).concat(-1);
  const certs = await k("trainer_certifications")
    .whereIn("trainer_id", tIds)
    .select("trainer_id", "device_type_id")
    .orderBy(["trainer_id", "device_type_id"]);
  const patterns = await k("trainer_working_pattern")
    .whereIn("trainer_id", tIds)
    .select("trainer_id", "weekday", "start_time", "end_time")
    .orderBy(["trainer_id", "weekday", "start_time", "id"]);
  const leave = await k("trainer_leave")
    .whereIn("trainer_id", tIds)
    .where("starts_on", "<=", endDate)
    .where("ends_on", ">=", startDate)
    .select("trainer_id", "starts_on", "ends_on")
    .orderBy(["trainer_id", "starts_on", "id"]);
  const calendarTrainers: PlanCalendar["trainers"] = [];
  const problemTrainers: AllocationProblem["trainers"] = [];
  const removed = new Set(params.whatIf.removeTrainerIds);
  for (const t of trainerRows) {
    if (removed.has(t.id)) {
      notes.push(`What-if: trainer ${t.display_name} left out.`);
      continue;
    }
    const site = siteName.get(t.site_id)!;
    const dts = certs
      .filter((c) => c.trainer_id === t.id)
      .map((c) => deviceTypes.find((d) => d.id === c.device_type_id))
      .filter(Boolean);
    const onLeave = (d: string) => leave.some((l) => l.trainer_id === t.id && inRange(d, l.starts_on, l.ends_on));
    const mine = patterns.filter((p) => p.trainer_id === t.id);
    const tw = allDates.flatMap((date) =>
      onLeave(date)
        ? []
        : mine
            .filter((p) => p.weekday === isoWeekday(date))
            .map((p) => ({ date, start: p.start_time, end: p.end_time })),
    );
    const id = t.display_name as string;
    const calTrainer = {
      id,
      trainerId: t.id,
      name: id,
      email: t.email ?? null,
      site,
      traineesPerSession: Number(t.trainees_per_session),
      hoursPerWeek: Number(t.hours_per_week),
      ...breakRuleOf({ maxContinuousMinutes: Number(t.max_continuous_minutes), breakMinutes: Number(t.break_minutes) }),
      windows: tw,
    };
    calendarTrainers.push(calTrainer);
    const hoursPerWeek = Array.from({ length: weeks }, (_, w) =>
      trainerHoursInWeek({ startDate, sites: sitesCal }, calTrainer, w),
    );
    problemTrainers.push({
      id,
      deviceTypeIds: dts.map((d) => deviceId(d!.name, site)),
      hoursPerWeek,
      traineesPerSession: Number(t.trainees_per_session),
    });
    if (mine.length === 0) notes.push(`Trainer ${id} has no weekly working pattern on file, so no hours.`);
  }
  notes.push(
    "Trainer hours per week = the hours of their weekly working pattern inside the site's working hours, on days neither on leave nor closed, less a break after each stretch of their longest teaching time, at most their contracted hours per week; a trainer supervises up to their trainees-per-session at once.",
  );

  // The pool: workers in scope and the chosen sites/departments with planning consent in force and a forecast
  // from an approved model version.
  const wq = workersWithPlace(k)
    .whereIn("workers.site_id", poolSites.length ? poolSites : [-1])
    .select(
      "workers.id",
      "workers.employee_number",
      "workers.given_name",
      "workers.family_name",
      "workers.email",
      "workers.site_id",
      "workers.department_id",
      "s.name as site",
      "d.name as department",
    )
    .orderBy(["workers.employee_number", "workers.id"]);
  if (params.pool.departmentIds.length) wq.whereIn("workers.department_id", params.pool.departmentIds);
  whereWorkerInScope(wq, scope);
  const candidates = await wq;
  const ids = candidates.map((w) => w.id as number);
  const consent = await latestConsent(k, ids, "planning");
  const forecasts: Row[] = [];
  const courses: Row[] = [];
  const fields: Row[] = [];
  const wleave: Row[] = [];
  const trained: Row[] = [];
  for (let i = 0; i < ids.length; i += 500) {
    const chunk = ids.slice(i, i + 500);
    forecasts.push(
      ...(await k("forecasts as f")
        .join("model_versions as m", "m.id", "f.model_version_id")
        .whereIn("f.worker_id", chunk)
        .where("m.status", "approved")
        .select("f.worker_id", "f.device_type_id", "f.log_mean", "f.log_scale", "f.df", "f.hours_done")
        .orderBy(["f.worker_id", "f.device_type_id", "f.id"])),
    );
    courses.push(
      ...(await k("device_courses")
        .whereIn("worker_id", chunk)
        .select("worker_id", "device_type_id", "status", "wear_time_limit_minutes")
        .orderBy(["worker_id", "device_type_id", "id"])),
    );
    fields.push(
      ...(await k("worker_training_fields")
        .whereIn("worker_id", chunk)
        .select("worker_id", "max_hours_per_week", "priority")
        .orderBy("worker_id")),
    );
    // Sessions on file, for workers already in training: who trained them last, and the hours scheduled before
    // the run's start that are not logged yet (they stay on the schedule and count towards their hours).
    trained.push(
      ...(await k("training_sessions")
        .whereIn("worker_id", chunk)
        .whereNot("status", "cancelled")
        .whereNotNull("scheduled_start")
        .select("worker_id", "device_type_id", "trainer_id", "status", "scheduled_start", "scheduled_end")
        .orderBy(["worker_id", "scheduled_start", "id"])),
    );
    wleave.push(
      ...(await k("worker_leave")
        .whereIn("worker_id", chunk)
        .where("starts_on", "<=", endDate)
        .where("ends_on", ">=", startDate)
        .select("worker_id", "starts_on", "ends_on")
        .orderBy(["worker_id", "starts_on", "id"])),
    );
  }
  const models: { model: ApprovedModel; deviceType: string }[] = [];
  for (const d of deviceTypes) {
    const m = await loadApprovedModel(k, d.id);
    if (m) models.push({ model: m, deviceType: d.name as string });
  }
  const excluded: ProblemSnapshot["excluded"] = [];
  const lacking: ProblemSnapshot["excluded"] = [];
  const commitments: (Commitment & { hoursScheduledBefore: number })[] = [];
  const problemWorkers: AllocationProblem["workers"] = [];
  const calendarWorkers: PlanCalendar["workers"] = [];
  for (const w of candidates) {
    const name = `${w.given_name} ${w.family_name}`;
    if (consent.get(w.id) !== "given") continue; // outside the pool by definition; not listed (no planning consent)
    const mineCourses = courses.filter((c) => c.worker_id === w.id);
    const inTraining = mineCourses.find((c) => c.status === "training");
    if (!inTraining && mineCourses.some((c) => c.status === "paused")) {
      excluded.push({
        workerId: w.id,
        name,
        reason: "Training is paused on a device; not planned until an assessor resumes it.",
      });
      continue;
    }
    if (!params.pool.includeProficientElsewhere && mineCourses.some((c) => c.status === "proficient")) {
      excluded.push({
        workerId: w.id,
        name,
        reason: "Already proficient on a device (the pool leaves them out unless you include them).",
      });
      continue;
    }
    const mine = forecasts.filter(
      (f) =>
        f.worker_id === w.id &&
        (inTraining
          ? f.device_type_id === inTraining.device_type_id
          : !mineCourses.some(
              (c) => c.device_type_id === f.device_type_id && (c.status === "proficient" || c.status === "stopped"),
            )),
    );
    if (mine.length === 0) {
      // Consent is given here, so the reason is the model, a stopped course or the baseline (named below).
      const stopped = mineCourses.some((c) => c.status === "stopped");
      const entry = {
        workerId: w.id,
        name,
        reason: noForecastText(models.length === 0 ? "no_model" : stopped ? "stopped" : "missing_measures"),
      };
      excluded.push(entry);
      if (models.length && !stopped) lacking.push(entry);
      continue;
    }
    const f = fields.find((x) => x.worker_id === w.id);
    const site = w.site as string;
    const options = mine.map((fc) => {
      const dt = deviceTypes.find((d) => d.id === fc.device_type_id)!;
      const total = plannedHoursFromLogScale(Number(fc.log_mean), Number(fc.log_scale), Number(fc.df), {
        quantile,
      }).planningHours;
      return {
        deviceTypeId: deviceId(dt.name, site),
        hoursNeeded: round2(Math.max(0.5, total - Number(fc.hours_done ?? 0))),
        dtMax: Number(dt.default_max_hours_per_week),
      };
    });
    const maxHoursPerWeek =
      f?.max_hours_per_week != null ? Number(f.max_hours_per_week) : Math.min(...options.map((o) => o.dtMax));
    const leaveDates = allDates.filter((d) =>
      wleave.some((l) => l.worker_id === w.id && inRange(d, l.starts_on, l.ends_on)),
    );
    const availableWeeks = Array.from({ length: weeks }, (_, i) => i).filter(
      (i) =>
        !weekDates(startDate, i)
          .slice(0, WORKDAYS)
          .some((d) => leaveDates.includes(d)),
    );
    const wid = String(w.id);
    if (inTraining) {
      const own = trained.filter((x) => x.worker_id === w.id && x.device_type_id === inTraining.device_type_id);
      const last = own.filter((x) => x.trainer_id != null).at(-1);
      const lastTrainer = last ? trainerRows.find((t) => t.id === last.trainer_id) : null;
      const before = own
        .filter(
          (x) => x.status === "scheduled" && x.scheduled_end && wallClock(x.scheduled_start) < startOfDay(startDate),
        )
        .reduce(
          (h, x) =>
            h +
            (minutesOf(hhmmOfWallClock(wallClock(x.scheduled_end))) -
              minutesOf(hhmmOfWallClock(wallClock(x.scheduled_start)))) /
              60,
          0,
        );
      commitments.push({
        workerId: wid,
        deviceTypeId: options[0].deviceTypeId,
        hoursNeeded: round2(Math.max(0, options[0].hoursNeeded - before)),
        hoursScheduledBefore: round2(before),
        maxHoursPerWeek,
        ...(availableWeeks.length < weeks ? { availableWeeks } : {}),
        preferredTrainerId: lastTrainer ? (lastTrainer.display_name as string) : null,
      });
    } else
      problemWorkers.push({
        id: wid,
        group: `${site} · ${w.department}`,
        priority: f ? Number(f.priority) : 1,
        options: options.map(({ deviceTypeId, hoursNeeded }) => ({ deviceTypeId, hoursNeeded })),
        maxHoursPerWeek,
        ...(availableWeeks.length < weeks ? { availableWeeks } : {}),
      });
    // A stricter wear-time limit an assessor set for this worker on a device type (on resuming a paused course).
    const wearTimeLimits = Object.fromEntries(
      mineCourses
        .filter((c) => c.wear_time_limit_minutes != null)
        .flatMap((c) => {
          const dt = deviceTypes.find((d) => d.id === c.device_type_id);
          return dt ? [[deviceId(dt.name, site), Number(c.wear_time_limit_minutes)]] : [];
        }),
    );
    calendarWorkers.push({
      id: wid,
      workerId: w.id,
      name,
      employeeNumber: w.employee_number,
      email: w.email ?? null,
      department: w.department,
      site,
      maxHoursPerWeek,
      unavailableDates: leaveDates,
      ...(Object.keys(wearTimeLimits).length ? { wearTimeLimits } : {}),
    });
  }
  // Name the measures each approved model still needs from the workers left out for their baseline.
  const zs: Map<number, Map<number, number>>[] = [];
  for (const m of models)
    zs.push(
      await baselineZScores(
        k,
        lacking.map((e) => e.workerId),
        m.model.measureIds,
      ),
    );
  for (const e of lacking) {
    const missing = models.flatMap((m, i) => {
      const z = zs[i].get(e.workerId);
      const labels = m.model.measureIds.flatMap((id, j) => (z?.has(id) ? [] : [m.model.measures[j].label]));
      return labels.length ? [`${labels.join(", ")} (${m.deviceType} model)`] : [];
    });
    e.reason = noForecastText("missing_measures", missing);
  }
  notes.push(
    `Hours needed = the ${percentileLabel(quantile)} of each forecast's total hours (the organisation's planning figure; from the approved model version), less hours already logged.`,
  );
  notes.push(
    `Session length = between the device type's shortest and longest session (${calendarDevices
      .filter((d, i, all) => all.findIndex((x) => x.deviceTypeId === d.deviceTypeId) === i)
      .map((d) => `${d.name} ${d.minSessionMinutes}–${Math.min(d.maxSessionMinutes!, d.wearTimeLimitMinutes)} min`)
      .join(
        ", ",
      )}), never over the wear-time limit${calendarWorkers.some((w) => w.wearTimeLimits) ? " or the lower limit an assessor set for a worker on resuming a paused course" : ""}.`,
  );
  notes.push(
    "Max hours per week = the coordinator's setting for the worker, else the strictest default among the device types that fit them. A week with leave on a working day is not available.",
  );
  if (params.fairnessShare > 0)
    notes.push(
      `Fairness: each department (per site) gets at least ⌊${Math.round(params.fairnessShare * 100)} % × its pool size⌋ workers ready, where capacity allows.`,
    );

  const booked = bookCommitments(
    {
      weeks,
      deviceTypes: problemDevices,
      trainers: problemTrainers,
      workers: problemWorkers,
      minimumSharePerGroup: params.fairnessShare,
    },
    commitments.filter((c) => c.hoursNeeded > 0),
  );
  if (commitments.length)
    notes.push(
      `${commitments.length} worker${commitments.length === 1 ? " is" : "s are"} already in training: they keep their device type and, where possible, their trainer, and their remaining hours (less hours already scheduled before the start) are booked first, ${round2(booked.committed.reduce((h, c) => h + c.hoursBooked, 0))} h in all. The device and trainer hours per week the solver plans against are what is left after them.`,
    );

  return {
    problem: booked.problem,
    calendar: {
      startDate,
      weeks,
      devices: calendarDevices,
      trainers: calendarTrainers,
      workers: calendarWorkers,
      sites: sitesCal,
    },
    notes,
    excluded,
    commitments: booked.committed,
    planningQuantile: quantile,
  };
}

const round2 = (x: number) => Math.round(x * 100) / 100;
