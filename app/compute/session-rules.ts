// The rules a dated session keeps (docs/methods.md, "Session rules"), written once: the second stage packs
// with them, the first stage's weekly capacities are derived from them, and publishing checks the packed
// sessions against them before anything is written. Pure: no clock, no database.
import { isoWeekday, minutesOf, weekDates } from "./plan-calendar";

export const DEFAULT_MIN_SESSION_MINUTES = 30;
export const DEFAULT_MAX_SESSION_MINUTES = 120;
export const DEFAULT_MAX_CONTINUOUS_MINUTES = 120;
export const DEFAULT_BREAK_MINUTES = 15;
/** Weekdays a site works when it has no working hours of its own on file: Monday to Friday. */
export const DEFAULT_WORKING_WEEKDAYS = [1, 2, 3, 4, 5];

export interface Interval {
  from: number;
  to: number;
}

/** A site's calendar over a horizon: working hours per ISO weekday and the days it is closed. */
export interface SiteCalendar {
  /** the site's name, as devices name it (`CalendarDevice.site`) */
  site: string;
  /** working hours per weekday (at most one span a day); null: none on file (Mon–Fri, any time of day) */
  hours: { weekday: number; start: string; end: string }[] | null;
  /** closures touching the horizon, each with its reason */
  closures: { startsOn: string; endsOn: string; reason: string }[];
}

export interface BreakRule {
  /** longest stretch of teaching without a break */
  maxContinuousMinutes: number;
  /** the break that ends a stretch: a gap shorter than this does not count as a break */
  breakMinutes: number;
}

/** The closure a date falls in, if any. */
export function closureOn(site: SiteCalendar | undefined, date: string) {
  return site?.closures.find((c) => date >= c.startsOn && date <= c.endsOn) ?? null;
}

/** The weekdays the site works (default Monday to Friday). */
export function workingWeekdays(site: SiteCalendar | undefined): number[] {
  return site?.hours ? [...new Set(site.hours.map((h) => h.weekday))].sort() : DEFAULT_WORKING_WEEKDAYS;
}

/**
 * The site's open time on a date in minutes of the day: nothing on a closure day or a weekday it does not work;
 * the whole day on a working weekday when it has no hours on file (the trainers' windows then decide alone).
 */
export function siteOpenOn(site: SiteCalendar | undefined, date: string): Interval[] {
  if (closureOn(site, date)) return [];
  const wd = isoWeekday(date);
  if (!site?.hours) return DEFAULT_WORKING_WEEKDAYS.includes(wd) ? [{ from: 0, to: 24 * 60 }] : [];
  return site.hours
    .filter((h) => h.weekday === wd)
    .map((h) => ({ from: minutesOf(h.start), to: minutesOf(h.end) }))
    .filter((i) => i.to > i.from);
}

/** Working windows of a date cut to the site's open time (empty on a closure day). */
export function clipToSite(site: SiteCalendar | undefined, date: string, windows: Interval[]): Interval[] {
  const open = siteOpenOn(site, date);
  const out: Interval[] = [];
  for (const w of windows)
    for (const o of open) {
      const from = Math.max(w.from, o.from);
      const to = Math.min(w.to, o.to);
      if (to > from) out.push({ from, to });
    }
  return out.sort((a, b) => a.from - b.from);
}

/**
 * A worker's session length on a device: at most the device type's longest session, its wear-time limit and a
 * stricter limit an assessor set for the worker; at least the device type's shortest session (or the longest,
 * where a stricter limit brings that below the shortest).
 */
export function sessionBounds(
  device: { wearTimeLimitMinutes: number; minSessionMinutes?: number; maxSessionMinutes?: number },
  workerLimit?: number,
): { min: number; max: number } {
  const max = Math.min(
    device.maxSessionMinutes ?? DEFAULT_MAX_SESSION_MINUTES,
    device.wearTimeLimitMinutes,
    workerLimit ?? Number.POSITIVE_INFINITY,
  );
  return { min: Math.min(device.minSessionMinutes ?? DEFAULT_MIN_SESSION_MINUTES, max), max };
}

export function breakRuleOf(t: { maxContinuousMinutes?: number; breakMinutes?: number }): BreakRule {
  return {
    maxContinuousMinutes: t.maxContinuousMinutes ?? DEFAULT_MAX_CONTINUOUS_MINUTES,
    breakMinutes: t.breakMinutes ?? DEFAULT_BREAK_MINUTES,
  };
}

/** A trainer's stretches of teaching on a day: their sessions joined where the gap between them is shorter than a break. */
export function teachingStretches(intervals: Interval[], rule: BreakRule): Interval[] {
  const sorted = [...intervals].sort((a, b) => a.from - b.from || a.to - b.to);
  const out: Interval[] = [];
  for (const i of sorted) {
    const last = out.at(-1);
    if (last && i.from - last.to < rule.breakMinutes) last.to = Math.max(last.to, i.to);
    else out.push({ ...i });
  }
  return out;
}

/** True when no stretch of teaching is longer than the rule allows. */
export function breaksKept(intervals: Interval[], rule: BreakRule): boolean {
  return teachingStretches(intervals, rule).every((s) => s.to - s.from <= rule.maxContinuousMinutes);
}

/**
 * The most minutes a trainer can teach in a day's windows under the break rule: windows closer than a break are
 * one span; each span holds stretches of the longest teaching time, a break after each.
 */
export function teachableMinutes(windows: Interval[], rule: BreakRule): number {
  const spans: { from: number; to: number; open: number }[] = [];
  for (const w of [...windows].sort((a, b) => a.from - b.from)) {
    const last = spans.at(-1);
    if (last && w.from - last.to < rule.breakMinutes) {
      last.to = Math.max(last.to, w.to);
      last.open += w.to - w.from;
    } else spans.push({ from: w.from, to: w.to, open: w.to - w.from });
  }
  const cycle = rule.maxContinuousMinutes + rule.breakMinutes;
  return spans.reduce((sum, s) => {
    const length = s.to - s.from;
    const full = Math.floor(length / cycle);
    const teach = full * rule.maxContinuousMinutes + Math.min(rule.maxContinuousMinutes, length - full * cycle);
    return sum + Math.min(teach, s.open);
  }, 0);
}

/** One dated session as the rules see it. */
export interface RuledSession {
  workerId: string;
  deviceId: string;
  trainerId: string;
  /** the unit's key within its device (serial) */
  serial: string;
  date: string;
  start: string;
  end: string;
}

/** What the rules need to know about the calendar's devices, trainers and workers. */
export interface RuleCalendar {
  sites?: SiteCalendar[];
  devices: {
    id: string;
    site: string;
    wearTimeLimitMinutes: number;
    minSessionMinutes?: number;
    maxSessionMinutes?: number;
  }[];
  trainers: { id: string; maxContinuousMinutes?: number; breakMinutes?: number }[];
  workers: { id: string; wearTimeLimits?: Record<string, number> }[];
}

/**
 * Every rule a set of sessions breaks, in plain words (empty: all kept). Length within the worker's bounds on
 * the device, on a day the site is open and inside its working hours, the trainer's breaks, and nobody and no
 * unit in two places at once (a trainer's shared session is one slot: same device and start, as long as its
 * longest session).
 */
export function sessionRuleViolations(calendar: RuleCalendar, sessions: RuledSession[]): string[] {
  const out: string[] = [];
  const devices = new Map(calendar.devices.map((d) => [d.id, d]));
  const trainers = new Map(calendar.trainers.map((t) => [t.id, t]));
  const workers = new Map(calendar.workers.map((w) => [w.id, w]));
  const sites = new Map((calendar.sites ?? []).map((s) => [s.site, s]));
  const slots = new Map<string, Interval & { trainerId: string; date: string }>();
  const byWorkerDay = new Map<string, Interval[]>();
  const byUnitDay = new Map<string, Interval[]>();
  const clash = (list: Interval[] | undefined, i: Interval) => !!list?.some((x) => i.from < x.to && x.from < i.to);
  for (const s of sessions) {
    const label = `${s.date} ${s.start}–${s.end} (${s.workerId}, ${s.trainerId})`;
    const dev = devices.get(s.deviceId);
    if (!dev) {
      out.push(`${label}: unknown device ${s.deviceId}.`);
      continue;
    }
    const i = { from: minutesOf(s.start), to: minutesOf(s.end) };
    const b = sessionBounds(dev, workers.get(s.workerId)?.wearTimeLimits?.[s.deviceId]);
    const length = i.to - i.from;
    if (length < b.min) out.push(`${label}: ${length} min is shorter than the shortest session, ${b.min} min.`);
    if (length > b.max) out.push(`${label}: ${length} min is longer than the longest session, ${b.max} min.`);
    const site = sites.get(dev.site);
    const closure = closureOn(site, s.date);
    if (closure) out.push(`${label}: ${dev.site} is closed (${closure.reason}).`);
    else if (!siteOpenOn(site, s.date).some((o) => o.from <= i.from && i.to <= o.to))
      out.push(`${label}: outside ${dev.site}'s working hours.`);
    const wk = `${s.workerId}|${s.date}`;
    if (clash(byWorkerDay.get(wk), i)) out.push(`${label}: the worker is booked twice at once.`);
    byWorkerDay.set(wk, [...(byWorkerDay.get(wk) ?? []), i]);
    const uk = `${s.deviceId}#${s.serial}|${s.date}`;
    if (clash(byUnitDay.get(uk), i)) out.push(`${label}: unit ${s.serial} is booked twice at once.`);
    byUnitDay.set(uk, [...(byUnitDay.get(uk) ?? []), i]);
    const sk = `${s.trainerId}|${s.date}|${s.deviceId}|${i.from}`;
    const slot = slots.get(sk);
    if (slot) slot.to = Math.max(slot.to, i.to);
    else slots.set(sk, { ...i, trainerId: s.trainerId, date: s.date });
  }
  const byTrainerDay = new Map<string, Interval[]>();
  for (const slot of slots.values()) {
    const tk = `${slot.trainerId}|${slot.date}`;
    const mine = byTrainerDay.get(tk) ?? [];
    if (clash(mine, slot)) out.push(`${slot.date}: ${slot.trainerId} is booked in two sessions at once.`);
    mine.push({ from: slot.from, to: slot.to });
    byTrainerDay.set(tk, mine);
  }
  for (const [key, list] of byTrainerDay) {
    const [trainerId, date] = key.split("|");
    const rule = breakRuleOf(trainers.get(trainerId) ?? {});
    for (const st of teachingStretches(list, rule))
      if (st.to - st.from > rule.maxContinuousMinutes)
        out.push(
          `${date}: ${trainerId} teaches ${st.to - st.from} min without a ${rule.breakMinutes}-minute break (at most ${rule.maxContinuousMinutes} min).`,
        );
  }
  return out;
}

// ── the first stage's weekly capacities, from the same rules ──

interface CapacityCalendar {
  startDate: string;
  sites?: SiteCalendar[];
}

/**
 * Device hours a week for the first stage: each unit's bookable hours × the share of the site's working days
 * it can be used (not closed, not in maintenance), at most the site's working hours on those days.
 */
export function deviceHoursInWeek(
  calendar: CapacityCalendar,
  device: { site: string; units: { bookableHoursPerWeek: number; unavailableDates: string[] }[] },
  week: number,
): number {
  const site = calendar.sites?.find((s) => s.site === device.site);
  const working = workingWeekdays(site);
  const days = weekDates(calendar.startDate, week).filter((d) => working.includes(isoWeekday(d)));
  const hours = device.units.reduce((sum, u) => {
    const usable = days.filter((d) => !u.unavailableDates.includes(d) && !closureOn(site, d));
    const share = (u.bookableHoursPerWeek * usable.length) / working.length;
    const open = site?.hours
      ? usable.reduce((m, d) => m + siteOpenOn(site, d).reduce((a, i) => a + i.to - i.from, 0), 0) / 60
      : share;
    return sum + Math.min(share, open);
  }, 0);
  return Math.round(hours * 100) / 100;
}

/**
 * Trainer hours a week for the first stage: the working windows cut to the site's working hours and closures,
 * less the breaks the trainer's rule needs, at most the contracted hours.
 */
export function trainerHoursInWeek(
  calendar: CapacityCalendar,
  trainer: {
    site?: string;
    hoursPerWeek: number;
    maxContinuousMinutes?: number;
    breakMinutes?: number;
    windows: { date: string; start: string; end: string }[];
  },
  week: number,
): number {
  const site = calendar.sites?.find((s) => s.site === trainer.site);
  const rule = breakRuleOf(trainer);
  const minutes = weekDates(calendar.startDate, week).reduce((sum, date) => {
    const own = trainer.windows
      .filter((x) => x.date === date)
      .map((x) => ({ from: minutesOf(x.start), to: minutesOf(x.end) }));
    return sum + teachableMinutes(clipToSite(site, date, own), rule);
  }, 0);
  return Math.round(Math.min(minutes / 60, trainer.hoursPerWeek) * 100) / 100;
}
