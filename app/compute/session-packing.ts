// Second stage of the allocator (docs/methods.md): the weekly hours of a plan become dated sessions — day, time,
// device unit, trainer — inside the trainers' working hours and the units' bookable hours. Pure and
// deterministic (no clock): greedy packing per week. Trainees of the same trainer and device type share a
// session slot up to the trainer's trainees-per-session; each trainee in a slot wears their own unit.
// Rules kept for every session (app/compute/session-rules.ts owns the session rules): inside one of the
// trainer's working windows on that date (leave days have no windows) cut to the site's working hours, never on
// a site's closure day, the trainer's break after their longest stretch of teaching, no overlap for the trainer,
// no overlap on a unit, the unit not in a maintenance window that date, each unit's weekly booked minutes within
// its bookable hours, each trainer's weekly minutes within their hours, a session between the device type's
// shortest and longest session (within the wear-time limit, or the worker's own stricter one), at most one
// session per worker per day, none on the worker's leave days, a worker's weekly minutes within their max hours
// per week. Hours that do not fit in their week move to the next week (the completion may then slip); a rest
// shorter than the shortest session joins another session of the week, moves on with the worker's later
// hours, or — in their last week — is rounded up to the shortest session; what cannot be placed by the end is
// reported.
import type { AllocationAssignment } from "./allocation";
import { hhmmOf, minutesOf, weekDates } from "./plan-calendar";
import {
  type BreakRule,
  breakRuleOf,
  breaksKept,
  clipToSite,
  type Interval,
  type SiteCalendar,
  sessionBounds,
} from "./session-rules";

export interface CalendarUnit {
  unitId: number | null;
  serial: string;
  bookableHoursPerWeek: number;
  unavailableDates: string[];
}
export interface CalendarDevice {
  id: string;
  deviceTypeId: number;
  siteId: number;
  name: string;
  site: string;
  wearTimeLimitMinutes: number;
  /** shortest and longest session (absent in snapshots made before they existed: 30 and 120 minutes) */
  minSessionMinutes?: number;
  maxSessionMinutes?: number;
  units: CalendarUnit[];
}
export interface CalendarTrainer {
  id: string;
  trainerId: number;
  name: string;
  email: string | null;
  traineesPerSession: number;
  hoursPerWeek: number;
  /** the trainer's site (absent in older snapshots) */
  site?: string;
  /** longest teaching without a break, and the break (absent in older snapshots: 120 and 15 minutes) */
  maxContinuousMinutes?: number;
  breakMinutes?: number;
  /** working windows over the horizon, leave days already left out */
  windows: { date: string; start: string; end: string }[];
}
export interface CalendarWorker {
  id: string;
  workerId: number;
  name: string;
  employeeNumber: string;
  email: string | null;
  department: string;
  site: string;
  maxHoursPerWeek: number;
  unavailableDates: string[];
  /** Stricter wear-time limits for this worker, minutes per session by device id (set by an assessor). */
  wearTimeLimits?: Record<string, number>;
}
export interface PlanCalendar {
  startDate: string;
  weeks: number;
  devices: CalendarDevice[];
  trainers: CalendarTrainer[];
  workers: CalendarWorker[];
  /** the sites' working hours and closures (absent in older snapshots: Mon–Fri, no closures) */
  sites?: SiteCalendar[];
}

export interface PackedSession {
  week: number;
  workerId: string;
  deviceId: string;
  trainerId: string;
  unitId: number | null;
  serial: string;
  date: string;
  start: string;
  end: string;
  minutes: number;
}
export interface UnplacedHours {
  workerId: string;
  week: number;
  minutes: number;
  reason: string;
}

const STEP = 15; // minutes between candidate start times
const overlaps = (list: Interval[] | undefined, from: number, to: number) =>
  !!list?.some((i) => from < i.to && i.from < to);

/** Splits minutes into the fewest blocks no longer than `limit`, as equal as possible. */
export function splitEqual(total: number, limit: number): number[] {
  if (total <= 0) return [];
  const n = Math.ceil(total / Math.max(1, limit));
  const base = Math.floor(total / n);
  return Array.from({ length: n }, (_, i) => base + (i < total - base * n ? 1 : 0));
}

/** Splits minutes into full blocks of `limit` and one shorter remainder (blocks of one length share slots well). */
export function splitFull(total: number, limit: number): number[] {
  if (total <= 0) return [];
  const size = Math.max(1, limit);
  const full = Math.floor(total / size);
  const rest = total - full * size;
  return [...Array.from({ length: full }, () => size), ...(rest > 0 ? [rest] : [])];
}

type Splitter = (total: number, limit: number) => number[];

/**
 * Cuts a week's minutes into sessions between the bounds: the sessions, and a rest shorter than the shortest
 * session (0 when none). Where the minutes fall between n − 1 longest sessions and n shortest ones, n − 1
 * longest sessions are cut and the rest is left over.
 */
export function cutSessions(
  total: number,
  bounds: { min: number; max: number },
  split: Splitter,
): { blocks: number[]; rest: number } {
  if (total <= 0) return { blocks: [], rest: 0 };
  if (total < bounds.min) return { blocks: [], rest: total };
  const n = Math.ceil(total / bounds.max);
  if (total < n * bounds.min)
    return { blocks: Array.from({ length: n - 1 }, () => bounds.max), rest: total - (n - 1) * bounds.max };
  const blocks = split(total, bounds.max).sort((a, b) => b - a);
  // lift blocks below the shortest session with minutes of the longest ones (total ≥ n × min, so it ends)
  for (let i = blocks.length - 1; i > 0 && blocks[i] < bounds.min; i--)
    for (let j = 0; j < i && blocks[i] < bounds.min; j++) {
      const give = Math.min(bounds.min - blocks[i], blocks[j] - bounds.min);
      blocks[j] -= give;
      blocks[i] += give;
    }
  return { blocks, rest: 0 };
}

/** Packs with both ways of cutting hours into sessions and keeps the one that leaves fewer minutes unplaced. */
export function packSessions(
  calendar: PlanCalendar,
  assignments: AllocationAssignment[],
): { sessions: PackedSession[]; unplaced: UnplacedHours[] } {
  const lost = (r: { unplaced: UnplacedHours[] }) => r.unplaced.reduce((s, u) => s + u.minutes, 0);
  const equal = packWith(calendar, assignments, splitEqual);
  if (lost(equal) === 0) return equal;
  const full = packWith(calendar, assignments, splitFull);
  return lost(full) < lost(equal) ? full : equal;
}

function packWith(
  calendar: PlanCalendar,
  assignments: AllocationAssignment[],
  splitMinutes: Splitter,
): { sessions: PackedSession[]; unplaced: UnplacedHours[] } {
  const devices = new Map(calendar.devices.map((d) => [d.id, d]));
  const trainers = new Map(calendar.trainers.map((t) => [t.id, t]));
  const workers = new Map(calendar.workers.map((w) => [w.id, w]));
  const sites = new Map((calendar.sites ?? []).map((s) => [s.site, s]));
  const rules = new Map<string, BreakRule>(calendar.trainers.map((t) => [t.id, breakRuleOf(t)]));
  const boundsOf = (workerId: string, dev: CalendarDevice) =>
    sessionBounds(dev, workers.get(workerId)?.wearTimeLimits?.[dev.id]);
  const sessions: PackedSession[] = [];
  const unplaced: UnplacedHours[] = [];
  const ordered = [...assignments].sort(
    (a, b) => a.completionWeek - b.completionWeek || a.workerId.localeCompare(b.workerId, "en", { numeric: true }),
  );
  type Hours = { workerId: string; deviceId: string; trainerId: string; minutes: number; fromWeek: number };
  const keyOf = (h: { workerId: string; deviceId: string; trainerId: string }) =>
    `${h.workerId}|${h.deviceId}|${h.trainerId}`;
  // the last week each worker has planned hours with a trainer on a device
  const lastWeek = new Map<string, number>();
  for (const a of ordered)
    for (const x of a.sessions) {
      const key = keyOf({ workerId: a.workerId, deviceId: a.deviceTypeId, trainerId: x.trainerId });
      lastWeek.set(key, Math.max(lastWeek.get(key) ?? -1, x.week));
    }

  // Hours that do not fit in their week move to the next week (same trainer and device), if they fit there.
  let carried: Hours[] = [];
  for (let week = 0; week < calendar.weeks; week++) {
    const dates = weekDates(calendar.startDate, week);
    const trainerBusy = new Map<string, Interval[]>(); // `${trainer}|${date}`
    const trainerMinutes = new Map<string, number>();
    const unitBusy = new Map<string, Interval[]>(); // `${device}#${unitIndex}|${date}`
    const unitMinutes = new Map<string, number>(); // `${device}#${unitIndex}`
    const workerDays = new Map<string, Set<string>>();
    const workerMinutes = new Map<string, number>();
    const slots: { trainerId: string; deviceId: string; date: string; from: number; to: number; trainees: number }[] =
      [];

    const freeUnit = (dev: CalendarDevice, date: string, from: number, to: number): number => {
      for (let u = 0; u < dev.units.length; u++) {
        const unit = dev.units[u];
        if (unit.unavailableDates.includes(date)) continue;
        const key = `${dev.id}#${u}`;
        if ((unitMinutes.get(key) ?? 0) + (to - from) > unit.bookableHoursPerWeek * 60 + 1e-9) continue;
        if (overlaps(unitBusy.get(`${key}|${date}`), from, to)) continue;
        return u;
      }
      return -1;
    };
    const book = (
      dev: CalendarDevice,
      u: number,
      trainer: CalendarTrainer,
      worker: CalendarWorker,
      date: string,
      from: number,
      to: number,
    ) => {
      const key = `${dev.id}#${u}`;
      unitMinutes.set(key, (unitMinutes.get(key) ?? 0) + (to - from));
      const ub = unitBusy.get(`${key}|${date}`) ?? [];
      ub.push({ from, to });
      unitBusy.set(`${key}|${date}`, ub);
      let days = workerDays.get(worker.id);
      if (!days) {
        days = new Set();
        workerDays.set(worker.id, days);
      }
      days.add(date);
      workerMinutes.set(worker.id, (workerMinutes.get(worker.id) ?? 0) + (to - from));
      sessions.push({
        week,
        workerId: worker.id,
        deviceId: dev.id,
        trainerId: trainer.id,
        unitId: dev.units[u].unitId,
        serial: dev.units[u].serial,
        date,
        start: hhmmOf(from),
        end: hhmmOf(to),
        minutes: to - from,
      });
    };

    // The week's minutes per worker, device and trainer (carried ones first), cut into sessions between the
    // bounds. Blocks are grouped by trainer and device type, longest first, so that trainees of one trainer fill
    // shared slots of equal length.
    const weekHours = new Map<string, Hours>();
    const add = (h: Hours) => {
      const prev = weekHours.get(keyOf(h));
      if (prev) {
        prev.minutes += h.minutes;
        prev.fromWeek = Math.min(prev.fromWeek, h.fromWeek);
      } else weekHours.set(keyOf(h), { ...h });
    };
    for (const c of carried) add(c);
    for (const a of ordered)
      for (const x of a.sessions.filter((y) => y.week === week))
        add({
          workerId: a.workerId,
          deviceId: a.deviceTypeId,
          trainerId: x.trainerId,
          minutes: Math.round(x.hours * 60),
          fromWeek: week,
        });
    const leftover = new Map<string, Hours>();
    const blocks: Hours[] = [];
    for (const h of weekHours.values()) {
      const dev = devices.get(h.deviceId);
      if (!dev) {
        blocks.push(h); // reported below
        continue;
      }
      const bounds = boundsOf(h.workerId, dev);
      const { blocks: cut, rest } = cutSessions(h.minutes, bounds, splitMinutes);
      if (rest > 0) {
        // a rest shorter than the shortest session: into a session of the week with room, on with the worker's
        // later hours, or (their last week) rounded up to the shortest session
        const room = cut.findLastIndex((m) => m + rest <= bounds.max);
        if (room >= 0) cut[room] += rest;
        else if (week < (lastWeek.get(keyOf(h)) ?? -1) && week < calendar.weeks - 1)
          leftover.set(keyOf(h), { ...h, minutes: rest });
        else cut.push(bounds.min);
      }
      for (const m of cut) blocks.push({ ...h, minutes: m });
    }
    blocks.sort(
      (x, y) =>
        x.trainerId.localeCompare(y.trainerId) ||
        x.deviceId.localeCompare(y.deviceId) ||
        y.minutes - x.minutes ||
        x.fromWeek - y.fromWeek ||
        x.workerId.localeCompare(y.workerId, "en", { numeric: true }),
    );

    for (const b of blocks) {
      const dev = devices.get(b.deviceId);
      const worker = workers.get(b.workerId);
      const trainer = trainers.get(b.trainerId);
      if (!dev || !worker || !trainer) {
        unplaced.push({
          workerId: b.workerId,
          week,
          minutes: b.minutes,
          reason: "The plan refers to a device type, worker or trainer that is no longer on file.",
        });
        continue;
      }
      const site = sites.get(dev.site);
      const rule = rules.get(trainer.id)!;
      const place = (block: number): boolean => {
        const usable = (date: string) =>
          !worker.unavailableDates.includes(date) && !workerDays.get(worker.id)?.has(date);
        let placed = false;
        if ((workerMinutes.get(worker.id) ?? 0) + block <= worker.maxHoursPerWeek * 60 + 1e-9) {
          // 1. join an open slot of the same trainer and device type
          for (const slot of slots) {
            if (
              slot.trainerId !== trainer.id ||
              slot.deviceId !== dev.id ||
              slot.trainees >= trainer.traineesPerSession
            )
              continue;
            if (slot.to - slot.from < block || !usable(slot.date)) continue;
            const u = freeUnit(dev, slot.date, slot.from, slot.from + block);
            if (u < 0) continue;
            book(dev, u, trainer, worker, slot.date, slot.from, slot.from + block);
            slot.trainees++;
            placed = true;
            break;
          }
          // 2. open a new slot inside the trainer's working windows, cut to the site's working hours, with the
          // trainer's breaks kept
          if (!placed && (trainerMinutes.get(trainer.id) ?? 0) + block <= trainer.hoursPerWeek * 60 + 1e-9) {
            for (const date of dates) {
              if (placed) break;
              if (!usable(date)) continue;
              const own = trainer.windows
                .filter((x) => x.date === date)
                .map((x) => ({ from: minutesOf(x.start), to: minutesOf(x.end) }));
              for (const w of clipToSite(site, date, own)) {
                if (placed) break;
                for (let from = w.from; from + block <= w.to; from += STEP) {
                  const busy = trainerBusy.get(`${trainer.id}|${date}`) ?? [];
                  if (overlaps(busy, from, from + block)) continue;
                  if (!breaksKept([...busy, { from, to: from + block }], rule)) continue;
                  const u = freeUnit(dev, date, from, from + block);
                  if (u < 0) continue;
                  busy.push({ from, to: from + block });
                  trainerBusy.set(`${trainer.id}|${date}`, busy);
                  trainerMinutes.set(trainer.id, (trainerMinutes.get(trainer.id) ?? 0) + block);
                  slots.push({ trainerId: trainer.id, deviceId: dev.id, date, from, to: from + block, trainees: 1 });
                  book(dev, u, trainer, worker, date, from, from + block);
                  placed = true;
                  break;
                }
              }
            }
          }
        }
        return placed;
      };
      let placed = place(b.minutes);
      // Not placeable whole: try two shorter sessions on different days (each at least the shortest session).
      let block = b.minutes;
      const { min } = boundsOf(worker.id, dev);
      if (!placed && b.minutes >= 2 * min) {
        const first = Math.ceil(b.minutes / 2);
        if (place(first)) {
          block = b.minutes - first;
          placed = place(block);
        }
      }
      if (!placed) {
        const prev = leftover.get(keyOf(b));
        if (prev) {
          prev.minutes += block;
          prev.fromWeek = Math.min(prev.fromWeek, b.fromWeek);
        } else leftover.set(keyOf(b), { ...b, minutes: block });
      }
    }
    carried = [...leftover.values()];
    if (week === calendar.weeks - 1) {
      for (const c of carried) {
        const dev = devices.get(c.deviceId)!;
        const worker = workers.get(c.workerId)!;
        const trainer = trainers.get(c.trainerId)!;
        const bounds = boundsOf(c.workerId, dev);
        const rule = rules.get(trainer.id)!;
        unplaced.push({
          workerId: c.workerId,
          week: c.fromWeek,
          minutes: c.minutes,
          reason: `No time for sessions of ${bounds.min}–${bounds.max} min in ${trainer.name}'s working hours (cut to ${dev.site}'s working hours and closures, with a ${rule.breakMinutes}-minute break after ${rule.maxContinuousMinutes} min of teaching) with a free ${dev.name} unit, on a day ${worker.name} is available, from week ${c.fromWeek + 1} to the end of the horizon.`,
        });
      }
    }
  }
  sessions.sort(
    (x, y) =>
      x.date.localeCompare(y.date) ||
      x.start.localeCompare(y.start) ||
      x.trainerId.localeCompare(y.trainerId) ||
      x.workerId.localeCompare(y.workerId, "en", { numeric: true }),
  );
  return { sessions, unplaced };
}
