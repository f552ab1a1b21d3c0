// Second stage of the allocator (docs/methods.md): the weekly hours of a plan become dated sessions — day, time,
// device unit, trainer — inside the trainers' working hours and the units' bookable hours. Pure and
// deterministic (no clock): greedy packing per week. Trainees of the same trainer and device type share a
// session slot up to the trainer's trainees-per-session; each trainee in a slot wears their own unit.
// Rules kept for every session: inside one of the trainer's working windows on that date (leave days have no
// windows), no overlap for the trainer, no overlap on a unit, the unit not in a maintenance window that date,
// each unit's weekly booked minutes within its bookable hours, each trainer's weekly minutes within their hours,
// a session no longer than the device's wear-time limit or the worker's own stricter one (and never over two hours), at most one session per worker per day, none on the
// worker's leave days, a worker's weekly minutes within their max hours per week. Hours that do not fit in their
// week move to the next week (the completion may then slip); what cannot be placed by the end is reported.
import type { AllocationAssignment } from "./allocation";
import { hhmmOf, minutesOf, weekDates } from "./plan-calendar";

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
  units: CalendarUnit[];
}
export interface CalendarTrainer {
  id: string;
  trainerId: number;
  name: string;
  email: string | null;
  traineesPerSession: number;
  hoursPerWeek: number;
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
/** Longest session we book, even where the wear-time limit allows more: two hours with a trainer. */
export const MAX_SESSION_MINUTES = 120;

interface Interval {
  from: number;
  to: number;
}
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
  const sessions: PackedSession[] = [];
  const unplaced: UnplacedHours[] = [];
  const ordered = [...assignments].sort(
    (a, b) => a.completionWeek - b.completionWeek || a.workerId.localeCompare(b.workerId, "en", { numeric: true }),
  );

  // Hours that do not fit in their week move to the next week (same trainer and device), if they fit there.
  let carried: { workerId: string; deviceId: string; trainerId: string; minutes: number; fromWeek: number }[] = [];
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

    // Blocks of the week, grouped by trainer and device type, longest first, so that trainees of one trainer
    // fill shared slots of equal length.
    const blocks: { workerId: string; deviceId: string; trainerId: string; minutes: number; fromWeek: number }[] = [];
    const pushBlocks = (workerId: string, deviceId: string, trainerId: string, total: number, fromWeek: number) => {
      const dev = devices.get(deviceId);
      const own = workers.get(workerId)?.wearTimeLimits?.[deviceId] ?? MAX_SESSION_MINUTES;
      const limit = Math.min(dev?.wearTimeLimitMinutes ?? MAX_SESSION_MINUTES, own, MAX_SESSION_MINUTES);
      for (const m of splitMinutes(total, limit)) blocks.push({ workerId, deviceId, trainerId, minutes: m, fromWeek });
    };
    for (const c of carried) pushBlocks(c.workerId, c.deviceId, c.trainerId, c.minutes, c.fromWeek);
    for (const a of ordered)
      for (const s of a.sessions.filter((x) => x.week === week))
        pushBlocks(a.workerId, a.deviceTypeId, s.trainerId, Math.round(s.hours * 60), week);
    blocks.sort(
      (x, y) =>
        x.trainerId.localeCompare(y.trainerId) ||
        x.deviceId.localeCompare(y.deviceId) ||
        y.minutes - x.minutes ||
        x.fromWeek - y.fromWeek ||
        x.workerId.localeCompare(y.workerId, "en", { numeric: true }),
    );
    const leftover = new Map<
      string,
      { workerId: string; deviceId: string; trainerId: string; minutes: number; fromWeek: number }
    >();

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
          // 2. open a new slot inside the trainer's working windows
          if (!placed && (trainerMinutes.get(trainer.id) ?? 0) + block <= trainer.hoursPerWeek * 60 + 1e-9) {
            for (const date of dates) {
              if (placed) break;
              if (!usable(date)) continue;
              for (const w of trainer.windows.filter((x) => x.date === date)) {
                if (placed) break;
                const ws = minutesOf(w.start);
                const we = minutesOf(w.end);
                for (let from = ws; from + block <= we; from += STEP) {
                  if (overlaps(trainerBusy.get(`${trainer.id}|${date}`), from, from + block)) continue;
                  const u = freeUnit(dev, date, from, from + block);
                  if (u < 0) continue;
                  const tb = trainerBusy.get(`${trainer.id}|${date}`) ?? [];
                  tb.push({ from, to: from + block });
                  trainerBusy.set(`${trainer.id}|${date}`, tb);
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
      // Not placeable whole: try two shorter sessions on different days (each at least half an hour).
      let block = b.minutes;
      if (!placed && b.minutes >= 60) {
        const first = Math.ceil(b.minutes / 2);
        if (place(first)) {
          block = b.minutes - first;
          placed = place(block);
        }
      }
      if (!placed) {
        const key = `${b.workerId}|${b.deviceId}|${b.trainerId}|${b.fromWeek}`;
        const prev = leftover.get(key);
        if (prev) prev.minutes += block;
        else leftover.set(key, { ...b, minutes: block });
      }
    }
    carried = [...leftover.values()];
    if (week === calendar.weeks - 1) {
      for (const c of carried) {
        const dev = devices.get(c.deviceId)!;
        const worker = workers.get(c.workerId)!;
        const trainer = trainers.get(c.trainerId)!;
        unplaced.push({
          workerId: c.workerId,
          week: c.fromWeek,
          minutes: c.minutes,
          reason: `No free time in ${trainer.name}'s working hours with a free ${dev.name} unit at ${dev.site} on a day ${worker.name} is available, from week ${c.fromWeek + 1} to the end of the horizon.`,
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
