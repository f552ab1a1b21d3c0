// Re-planning from the published plan with as little disruption as possible (docs/methods.md, "Re-planning").
// A worker's published sessions are kept unless a change forces them to move (leave, maintenance, a unit out of
// service, a trainer gone, a pause or withdrawal, a new priority or forecast); those that may stay enter the
// solver with a second option — exactly their published weekly hours — worth their priority plus the keep
// weight the coordinator set, so the solver trades plan value against the number of people who move. Kept
// sessions are carried over unchanged; everyone else is packed around them. Workers already in training keep
// theirs under the same rules, without a solver option (their hours are booked as commitments). Pure.
import type { AllocationPlan, AllocationProblem } from "./allocation";
import type { CommittedPlan } from "./commitments";
import { type Placement, placePlan, type RunSummary } from "./placement";
import { hhmmOf, minutesOf, weekDates } from "./plan-calendar";
import type { PackedSession, PlanCalendar } from "./session-packing";
import { breakRuleOf } from "./session-rules";

/** A published session in the calendar's ids (device id = device type at the site, trainer id = their name). */
export interface PublishedSession {
  workerId: string;
  deviceId: string;
  trainerId: string | null;
  unitId: number | null;
  serial: string;
  date: string;
  start: string;
  end: string;
}

export interface ReplanDecision {
  keepWeight: number;
  /** workers whose published sessions may stay, with those sessions */
  keepable: { workerId: string; name: string; sessions: PublishedSession[] }[];
  /** workers whose published sessions must move, with the first reason found */
  mustMove: { workerId: string; name: string; reason: string }[];
  /** workers already in training whose published sessions stay as they are (absent in older snapshots) */
  committedKept?: { workerId: string; name: string; sessions: PublishedSession[] }[];
}

export interface ReplanOutcome {
  kept: { workerId: string; name: string; sessions: number }[];
  moved: { workerId: string; name: string; reason: string }[];
}

const overlaps = (a: { start: string; end: string }, b: { start: string; end: string }) =>
  minutesOf(a.start) < minutesOf(b.end) && minutesOf(b.start) < minutesOf(a.end);

function weekOf(calendar: PlanCalendar, date: string): number {
  for (let w = 0; w < calendar.weeks; w++) if (weekDates(calendar.startDate, w).includes(date)) return w;
  return -1;
}

/**
 * Why a published session cannot stay on the current calendar, or null when it can. Checked in the order a
 * coordinator would look: the worker, the trainer, the unit.
 */
function sessionProblem(calendar: PlanCalendar, s: PublishedSession): string | null {
  const worker = calendar.workers.find((w) => w.id === s.workerId);
  if (!worker) return "no longer in the pool";
  if (worker.unavailableDates.includes(s.date)) return `on leave on ${s.date}`;
  const device = calendar.devices.find((d) => d.id === s.deviceId);
  if (!device) return `${s.deviceId} is not planned any more`;
  const limit = Math.min(device.wearTimeLimitMinutes, worker.wearTimeLimits?.[s.deviceId] ?? Infinity);
  if (minutesOf(s.end) - minutesOf(s.start) > limit)
    return `the session on ${s.date} is longer than the wear-time limit now (${limit} min)`;
  const trainer = calendar.trainers.find((t) => t.id === s.trainerId);
  if (!trainer) return `trainer ${s.trainerId ?? "(none)"} is not available for this plan`;
  const inWindow = trainer.windows.some(
    (w) => w.date === s.date && minutesOf(w.start) <= minutesOf(s.start) && minutesOf(s.end) <= minutesOf(w.end),
  );
  if (!inWindow) return `trainer ${trainer.name} is on leave or not working at that time on ${s.date}`;
  const unit = device.units.find((u) => u.unitId === s.unitId);
  if (!unit) return `unit ${s.serial} is out of service`;
  if (unit.unavailableDates.includes(s.date)) return `unit ${s.serial} is in maintenance on ${s.date}`;
  if (weekOf(calendar, s.date) < 0) return "outside the horizon";
  return null;
}

/**
 * Decides, worker by worker, whether their published sessions may stay, and gives each worker who may keep
 * them a fixed-schedule option in the problem (their published hours per week, bonus = keepWeight).
 * `publishedPriority` holds each worker's priority when the plan was published; a different one now forces
 * a move (the coordinator asked for a new order). Workers already in training (`commitments`) are not options
 * of the solver: theirs stay fixed in `committedKept` under the same rules, or move with the first reason found.
 */
export function planFromPublished(
  problem: AllocationProblem,
  calendar: PlanCalendar,
  published: PublishedSession[],
  publishedPriority: Map<string, number>,
  keepWeight: number,
  outOfPool: Map<string, { name: string; reason: string }>,
  commitments: CommittedPlan[] = [],
): { problem: AllocationProblem; decision: ReplanDecision } {
  const byWorker = new Map<string, PublishedSession[]>();
  for (const s of published) byWorker.set(s.workerId, [...(byWorker.get(s.workerId) ?? []), s]);
  const names = new Map(calendar.workers.map((w) => [w.id, w.name]));
  const decision: ReplanDecision = { keepWeight, keepable: [], mustMove: [], committedKept: [] };
  const committedOf = new Map(commitments.map((c) => [c.workerId, c]));
  const options = new Map<string, AllocationProblem["workers"][number]["options"][number]>();
  const inProblem = new Map(problem.workers.map((w) => [w.id, w]));
  const ids = [...byWorker.keys()].sort((a, b) => a.localeCompare(b, "en", { numeric: true }));
  for (const id of ids) {
    const sessions = byWorker.get(id)!;
    const away = outOfPool.get(id);
    if (away) {
      decision.mustMove.push({ workerId: id, name: away.name, reason: away.reason });
      continue;
    }
    const name = names.get(id) ?? id;
    const move = (reason: string) => decision.mustMove.push({ workerId: id, name, reason });
    const w = inProblem.get(id);
    if (!w) {
      const c = committedOf.get(id);
      const reason = c ? committedProblem(calendar, c, sessions) : "no hours left to plan for their training";
      if (reason) move(reason);
      else decision.committedKept!.push({ workerId: id, name, sessions });
      continue;
    }
    const before = publishedPriority.get(id);
    if (before !== undefined && before !== w.priority) {
      move(`priority changed from ${before} to ${w.priority}`);
      continue;
    }
    const devices = new Set(sessions.map((s) => s.deviceId));
    if (devices.size > 1) {
      move("sessions on more than one device type");
      continue;
    }
    const deviceId = sessions[0].deviceId;
    const option = w.options.find((o) => o.deviceTypeId === deviceId);
    if (!option) {
      move(`${deviceId} no longer fits them`);
      continue;
    }
    const problemFound = sessions.map((s) => sessionProblem(calendar, s)).find((p) => p !== null);
    if (problemFound) {
      move(problemFound);
      continue;
    }
    const weeklyHours = new Array<number>(calendar.weeks).fill(0);
    for (const s of sessions) weeklyHours[weekOf(calendar, s.date)] += (minutesOf(s.end) - minutesOf(s.start)) / 60;
    const total = weeklyHours.reduce((a, b) => a + b, 0);
    if (!covers(total, option.hoursNeeded, sessions.length)) {
      move(`needs ${round1(option.hoursNeeded)} h now, the published sessions give ${round1(total)} h`);
      continue;
    }
    decision.keepable.push({ workerId: id, name, sessions });
    options.set(id, { deviceTypeId: deviceId, hoursNeeded: total, weeklyHours, bonus: keepWeight });
  }
  return {
    problem: {
      ...problem,
      workers: problem.workers.map((w) =>
        options.has(w.id) ? { ...w, options: [...w.options, options.get(w.id)!] } : w,
      ),
    },
    decision,
  };
}

/**
 * Whether published sessions give the hours needed. Placement writes each week's planned hours in whole minutes
 * (rounded), so published sessions may fall short of the planned hours by up to half a minute a session; a
 * shortfall within that rounding is no reason to move anyone.
 */
function covers(publishedHours: number, neededHours: number, sessionCount: number): boolean {
  return publishedHours + (0.5 * sessionCount) / 60 + 1e-6 >= neededHours;
}

/**
 * Why a worker in training cannot keep their published sessions, or null when they can: the sessions must be on
 * their device type, each still fit the calendar, and together cover their remaining hours — or at least as many
 * as the first stage could book inside this horizon.
 */
function committedProblem(calendar: PlanCalendar, c: CommittedPlan, sessions: PublishedSession[]): string | null {
  const other = sessions.find((s) => s.deviceId !== c.assignment.deviceTypeId);
  if (other) return `a session on ${other.date} is not on ${c.assignment.deviceTypeId}, the device they train on`;
  const problemFound = sessions.map((s) => sessionProblem(calendar, s)).find((p) => p !== null);
  if (problemFound) return problemFound;
  const total = sessions.reduce((h, s) => h + (minutesOf(s.end) - minutesOf(s.start)) / 60, 0);
  if (!covers(total, c.hoursBooked, sessions.length))
    return `needs ${round1(c.hoursBooked + c.hoursLeft)} h now, the published sessions give ${round1(total)} h`;
  return null;
}

/** Who keeps their sessions and who moves, and why, once the solver has chosen. */
export function replanOutcome(decision: ReplanDecision, plan: AllocationPlan): ReplanOutcome {
  const kept = new Set(plan.kept ?? []);
  const chosen = new Set(plan.assignments.map((a) => a.workerId));
  return {
    kept: [...decision.keepable.filter((k) => kept.has(k.workerId)), ...(decision.committedKept ?? [])]
      .sort((a, b) => a.workerId.localeCompare(b.workerId, "en", { numeric: true }))
      .map((k) => ({ workerId: k.workerId, name: k.name, sessions: k.sessions.length })),
    moved: [
      ...decision.mustMove,
      ...decision.keepable
        .filter((k) => !kept.has(k.workerId))
        .map((k) => ({
          workerId: k.workerId,
          name: k.name,
          reason: chosen.has(k.workerId)
            ? "moved to make room for more value than keeping their sessions is worth"
            : "left out of this plan: the time frees room for more value than keeping their sessions is worth",
        })),
    ],
  };
}

/**
 * Placement of a re-plan: the kept workers' published sessions (workers in training included) stay exactly as
 * they are, and only the other commitments are re-packed; the trainers' time
 * they take is cut out of the working windows and their hours off the trainers' and units' weekly hours
 * (the largest week's, so no week can overbook), the rest of the plan is packed around them, and a session that
 * landed on a unit a kept session holds at that time moves to a free unit of the same type, or is reported as
 * not placed.
 */
export function placeReplan(
  calendar: PlanCalendar,
  commitments: CommittedPlan[],
  plan: AllocationPlan,
  decision: ReplanDecision,
): Placement {
  const committedKept = decision.committedKept ?? [];
  const keptIds = new Set([...(plan.kept ?? []), ...committedKept.map((k) => k.workerId)]);
  const kept: PackedSession[] = [...decision.keepable.filter((k) => keptIds.has(k.workerId)), ...committedKept].flatMap(
    (k) =>
      k.sessions.map((s) => ({
        week: weekOf(calendar, s.date),
        workerId: s.workerId,
        deviceId: s.deviceId,
        trainerId: s.trainerId ?? "",
        unitId: s.unitId,
        serial: s.serial,
        date: s.date,
        start: s.start,
        end: s.end,
        minutes: minutesOf(s.end) - minutesOf(s.start),
      })),
  );
  const maxWeekly = (pick: (s: PackedSession) => boolean) => {
    const perWeek = new Map<number, number>();
    for (const s of kept) if (pick(s)) perWeek.set(s.week, (perWeek.get(s.week) ?? 0) + s.minutes / 60);
    return Math.max(0, ...perWeek.values());
  };
  const around: PlanCalendar = {
    ...calendar,
    trainers: calendar.trainers.map((t) => {
      const mine = kept.filter((s) => s.trainerId === t.id);
      if (mine.length === 0) return t;
      // a trainer's group slot counts once however many kept trainees share it
      const slots = new Map(mine.map((s) => [`${s.date}|${s.start}|${s.end}`, s] as const));
      const slotHours = new Map<number, number>();
      for (const s of slots.values()) slotHours.set(s.week, (slotHours.get(s.week) ?? 0) + s.minutes / 60);
      return {
        ...t,
        hoursPerWeek: Math.max(0, t.hoursPerWeek - Math.max(0, ...slotHours.values())),
        // new sessions keep a break's distance from kept ones, so no stretch of teaching runs on past its limit
        windows: t.windows.flatMap((w) =>
          cut(
            w,
            [...slots.values()].filter((s) => s.date === w.date),
            breakRuleOf(t).breakMinutes,
          ),
        ),
      };
    }),
    devices: calendar.devices.map((d) => ({
      ...d,
      units: d.units.map((u) => {
        const h = maxWeekly((s) => s.deviceId === d.id && s.unitId === u.unitId && u.unitId !== null);
        return h > 0 ? { ...u, bookableHoursPerWeek: Math.max(0, u.bookableHoursPerWeek - h) } : u;
      }),
    })),
    workers: calendar.workers.filter((w) => !keptIds.has(w.id)),
  };
  const rest: AllocationPlan = { ...plan, assignments: plan.assignments.filter((a) => !keptIds.has(a.workerId)) };
  const placed = placePlan(
    around,
    commitments.filter((c) => !keptIds.has(c.workerId)),
    rest,
  );

  // units: a kept session keeps its unit; a new session on that unit at that time takes another one or goes
  const sessions: PackedSession[] = [...kept];
  const unplaced = [...placed.unplaced];
  const lost = new Set<string>();
  const unitMinutes = (unitId: number | null, week: number) =>
    sessions.filter((x) => x.unitId === unitId && x.week === week).reduce((m, x) => m + x.minutes, 0);
  for (const s of placed.sessions) {
    const clash = (unitId: number | null) =>
      sessions.some((x) => x.unitId === unitId && x.date === s.date && overlaps(x, s));
    if (s.unitId === null || !clash(s.unitId)) {
      sessions.push(s);
      continue;
    }
    const device = calendar.devices.find((d) => d.id === s.deviceId)!;
    const free = device.units.find(
      (u) =>
        u.unitId !== null &&
        !u.unavailableDates.includes(s.date) &&
        !clash(u.unitId) &&
        unitMinutes(u.unitId, s.week) + s.minutes <= u.bookableHoursPerWeek * 60,
    );
    if (free) sessions.push({ ...s, unitId: free.unitId, serial: free.serial });
    else {
      lost.add(s.workerId);
      unplaced.push({
        workerId: s.workerId,
        week: s.week,
        minutes: s.minutes,
        reason: `Every ${device.name} unit at ${device.site} is taken on ${s.date} at ${s.start} (kept sessions).`,
      });
    }
  }
  const label = new Map(calendar.workers.map((w) => [w.id, w]));
  const notReady = [
    ...placed.notReady.filter((n) => !lost.has(n.workerId)),
    ...[...lost].map((id) => {
      const mine = unplaced.filter((u) => u.workerId === id);
      const hours = Math.round((mine.reduce((m, u) => m + u.minutes, 0) / 60) * 10) / 10;
      return {
        workerId: id,
        name: label.get(id)?.name ?? id,
        employeeNumber: label.get(id)?.employeeNumber ?? "",
        hoursUnplaced: hours,
        reason: `${hours} h could not be placed on the calendar. ${mine[0].reason}`,
      };
    }),
  ].filter((n) => plan.assignments.some((a) => a.workerId === n.workerId));
  return {
    sessions,
    unplaced,
    readyIds: [...[...keptIds].filter((id) => plan.assignments.some((a) => a.workerId === id)), ...placed.readyIds]
      .filter((id) => !lost.has(id))
      .sort((a, b) => a.localeCompare(b, "en", { numeric: true })),
    notReady,
    continuing: {
      total: commitments.length,
      finishing:
        placed.continuing.finishing + commitments.filter((c) => keptIds.has(c.workerId) && c.hoursLeft === 0).length,
    },
  };
}

/** Placement of any run: a re-plan's (kept sessions first) or a plain one's. */
export function placeRun(
  calendar: PlanCalendar,
  commitments: CommittedPlan[],
  plan: AllocationPlan,
  replan: ReplanDecision | undefined,
): Placement {
  return replan ? placeReplan(calendar, commitments, plan, replan) : placePlan(calendar, commitments, plan);
}

/** The runs list's numbers for a re-plan: the ready count and value after placing around the kept sessions. */
export function replanSummary(
  calendar: PlanCalendar,
  commitments: CommittedPlan[],
  plan: AllocationPlan,
  replan: ReplanDecision,
  priorities: Map<string, number>,
  poolSize: number,
): RunSummary {
  const p = placeReplan(calendar, commitments, plan, replan);
  return {
    ready: p.readyIds.length,
    pool: poolSize,
    value: Math.round(p.readyIds.reduce((s, id) => s + (priorities.get(id) ?? 1), 0) * 100) / 100,
    continuing: commitments.length,
  };
}

/** A working window less the kept slots inside it, each widened by `margin` minutes on both sides. */
function cut(
  w: { date: string; start: string; end: string },
  slots: { start: string; end: string }[],
  margin: number,
): { date: string; start: string; end: string }[] {
  let pieces = [{ from: minutesOf(w.start), to: minutesOf(w.end) }];
  for (const s of slots) {
    const a = minutesOf(s.start) - margin;
    const b = minutesOf(s.end) + margin;
    pieces = pieces.flatMap((p) =>
      b <= p.from || a >= p.to
        ? [p]
        : [...(a > p.from ? [{ from: p.from, to: a }] : []), ...(b < p.to ? [{ from: b, to: p.to }] : [])],
    );
  }
  return pieces.map((p) => ({ date: w.date, start: hhmmOf(p.from), end: hhmmOf(p.to) }));
}

const round1 = (x: number) => Math.round(x * 10) / 10;
