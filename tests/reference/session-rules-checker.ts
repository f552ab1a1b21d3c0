/**
 * Independent checker of dated sessions against the session rules of docs/methods.md ("Session rules"):
 * every session between the shortest and longest session of its device type (the longest never over the
 * wear-time limit or a worker's stricter one), on a day its site is open and inside the site's working hours,
 * inside the trainer's working windows; a trainer never teaches longer than their longest stretch without a
 * break of the stated length; no worker, trainer or unit booked twice at the same minute (a trainer's shared
 * session — same device, same start; it lasts as long as its longest — counts once, with at most
 * trainees-per-session people).
 * It works minute by minute on its own arrays and imports only types, so a bug in the packing code or in
 * app/compute/session-rules.ts cannot hide behind shared code. Returns the violations; empty means valid.
 */
import type { PackedSession, PlanCalendar } from "../../app/compute/session-packing";

export interface CheckSite {
  /** working hours per ISO weekday; null means none on file: Monday to Friday, any time of day */
  hours: { weekday: number; start: string; end: string }[] | null;
  closures: { startsOn: string; endsOn: string }[];
}
export interface CheckTrainer {
  maxContinuousMinutes: number;
  breakMinutes: number;
  traineesPerSession: number;
  /** working windows by date; absent: not checked */
  windows?: { date: string; start: string; end: string }[];
}
export interface CheckSession {
  worker: string;
  trainer: string;
  device: string;
  unit: string;
  site: string;
  date: string;
  start: string;
  end: string;
  /** the shortest and longest session allowed for this worker on this device */
  min: number;
  max: number;
}

const DAY = 24 * 60;
const toMin = (hhmm: string) => Number(hhmm.slice(0, 2)) * 60 + Number(hhmm.slice(3, 5));
const weekdayOf = (date: string) => {
  const d = new Date(`${date}T12:00:00Z`).getUTCDay();
  return d === 0 ? 7 : d;
};

export function checkSessionRules(
  sites: Record<string, CheckSite>,
  trainers: Record<string, CheckTrainer>,
  sessions: CheckSession[],
): string[] {
  const errors: string[] = [];
  const workerMinutes = new Map<string, Uint8Array>();
  const unitMinutes = new Map<string, Uint8Array>();
  // a trainer's shared sessions: same trainer, day, device and start; as long as the longest of them
  const slots = new Map<string, { from: number; to: number; n: number }>();
  const minutesFor = (m: Map<string, Uint8Array>, key: string) => {
    let a = m.get(key);
    if (!a) {
      a = new Uint8Array(DAY);
      m.set(key, a);
    }
    return a;
  };

  for (const s of sessions) {
    const label = `${s.date} ${s.start}–${s.end} worker ${s.worker} trainer ${s.trainer}`;
    const from = toMin(s.start);
    const to = toMin(s.end);
    const length = to - from;
    if (!(length > 0)) {
      errors.push(`${label}: not a positive length`);
      continue;
    }
    if (length < s.min) errors.push(`${label}: ${length} min is below the minimum ${s.min}`);
    if (length > s.max) errors.push(`${label}: ${length} min is above the maximum ${s.max}`);

    const site = sites[s.site];
    if (!site) errors.push(`${label}: unknown site ${s.site}`);
    else {
      if (site.closures.some((c) => s.date >= c.startsOn && s.date <= c.endsOn))
        errors.push(`${label}: on a closure day of ${s.site}`);
      const wd = weekdayOf(s.date);
      const inside = site.hours
        ? site.hours.some((h) => h.weekday === wd && toMin(h.start) <= from && to <= toMin(h.end))
        : wd <= 5;
      if (!inside) errors.push(`${label}: outside the working hours of ${s.site}`);
    }
    const t = trainers[s.trainer];
    if (!t) errors.push(`${label}: unknown trainer`);
    else if (t.windows && !t.windows.some((w) => w.date === s.date && toMin(w.start) <= from && to <= toMin(w.end)))
      errors.push(`${label}: outside the trainer's working windows`);

    const wm = minutesFor(workerMinutes, `${s.worker}|${s.date}`);
    const um = minutesFor(unitMinutes, `${s.unit}|${s.date}`);
    const sk = `${s.trainer}|${s.date}|${s.device}|${from}`;
    const slot = slots.get(sk) ?? { from, to, n: 0 };
    slot.to = Math.max(slot.to, to);
    slot.n++;
    slots.set(sk, slot);
    let workerTwice = false;
    let unitTwice = false;
    for (let m = from; m < to; m++) {
      if (wm[m]++) workerTwice = true;
      if (um[m]++) unitTwice = true;
    }
    if (workerTwice) errors.push(`${label}: worker booked twice`);
    if (unitTwice) errors.push(`${label}: unit ${s.unit} booked twice`);
  }

  // per trainer-day, which shared session holds each minute
  const trainerSlot = new Map<string, (string | null)[]>();
  for (const [key, slot] of slots) {
    const [trainer, date] = key.split("|");
    const cap = trainers[trainer]?.traineesPerSession ?? 1;
    if (slot.n > cap) errors.push(`${key}: ${slot.n} trainees in one session, at most ${cap}`);
    const tk = `${trainer}|${date}`;
    let ts = trainerSlot.get(tk);
    if (!ts) {
      ts = new Array(DAY).fill(null);
      trainerSlot.set(tk, ts);
    }
    let twice = false;
    for (let m = slot.from; m < slot.to; m++) {
      if (ts[m] !== null) twice = true;
      ts[m] = key;
    }
    if (twice) errors.push(`${key}: the trainer is in two sessions at once`);
  }
  // breaks: walk the day minute by minute; a stretch ends once the trainer has been free for a whole break
  for (const [key, minutes] of trainerSlot) {
    const t = trainers[key.split("|")[0]];
    if (!t) continue;
    let stretchStart = -1;
    let lastBusy = -1;
    for (let m = 0; m <= DAY; m++) {
      const busy = m < DAY && minutes[m] !== null;
      if (busy) {
        if (stretchStart < 0 || m - lastBusy - 1 >= t.breakMinutes) stretchStart = m;
        lastBusy = m;
        if (m + 1 - stretchStart > t.maxContinuousMinutes) {
          errors.push(`${key}: teaches more than ${t.maxContinuousMinutes} min without a ${t.breakMinutes}-min break`);
          break;
        }
      }
    }
  }
  return errors;
}

/** The checker's view of packed sessions over a plan calendar (bounds re-derived here from the calendar). */
export function checkPackedSessions(calendar: PlanCalendar, sessions: PackedSession[]): string[] {
  const sites: Record<string, CheckSite> = {};
  for (const d of calendar.devices) sites[d.site] = { hours: null, closures: [] };
  for (const s of calendar.sites ?? []) sites[s.site] = { hours: s.hours, closures: s.closures };
  const trainers: Record<string, CheckTrainer> = {};
  for (const t of calendar.trainers)
    trainers[t.id] = {
      maxContinuousMinutes: t.maxContinuousMinutes ?? 120,
      breakMinutes: t.breakMinutes ?? 15,
      traineesPerSession: t.traineesPerSession,
      windows: t.windows,
    };
  const devices = new Map(calendar.devices.map((d) => [d.id, d]));
  const workers = new Map(calendar.workers.map((w) => [w.id, w]));
  const errors: string[] = [];
  const list: CheckSession[] = [];
  for (const s of sessions) {
    const d = devices.get(s.deviceId);
    const w = workers.get(s.workerId);
    if (!d || !w) {
      errors.push(`session of ${s.workerId} on ${s.deviceId}: unknown worker or device`);
      continue;
    }
    if (w.unavailableDates.includes(s.date)) errors.push(`${s.workerId} on ${s.date}: the worker is on leave`);
    const unit = d.units.find((u) => u.serial === s.serial);
    if (!unit) errors.push(`${s.serial}: not a unit of ${d.id}`);
    else if (unit.unavailableDates.includes(s.date)) errors.push(`${s.serial} on ${s.date}: in maintenance`);
    let max = Math.min(d.maxSessionMinutes ?? 120, d.wearTimeLimitMinutes);
    const own = w.wearTimeLimits?.[d.id];
    if (own !== undefined && own < max) max = own;
    const min = Math.min(d.minSessionMinutes ?? 30, max);
    list.push({
      worker: s.workerId,
      trainer: s.trainerId,
      device: d.id,
      unit: `${d.id}#${s.serial}`,
      site: d.site,
      date: s.date,
      start: s.start,
      end: s.end,
      min,
      max,
    });
  }
  return [...errors, ...checkSessionRules(sites, trainers, list)];
}
