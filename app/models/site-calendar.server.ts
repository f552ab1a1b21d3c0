import type { Principal } from "~/auth/guard.server";
import type { PlanCalendar } from "~/compute/session-packing";
import type { RuleCalendar, SiteCalendar } from "~/compute/session-rules";
import { nowInstant } from "~/dates";
import { addDays } from "~/dates/calendar";
import { type Db, db } from "~/db.server";
import { notFound } from "~/errors";
import { type ImportedClosure, readClosuresIcs } from "./closures-ics.server";

// A site's working hours per weekday and its closures (public holidays, shutdown weeks): edited by an admin,
// read by the allocator for both stages (app/compute/session-rules.ts) and checked again before publishing.

export interface WorkingDay {
  weekday: number;
  start: string;
  end: string;
}
export interface ClosureRow {
  id: number;
  startsOn: string;
  endsOn: string;
  reason: string;
  source: "form" | "ics";
}

async function siteOrThrow(k: Db, siteId: number) {
  const site = await k("sites").where({ id: siteId }).first("id", "name", "code", "time_zone");
  if (!site) throw notFound("That site does not exist.");
  return site;
}

/** The site's working hours (empty: none on file) and every closure on file, earliest first. */
export async function siteCalendarView(siteId: number, k: Db = db()) {
  const site = await siteOrThrow(k, siteId);
  const hours = await k("site_working_hours")
    .where({ site_id: siteId })
    .select("weekday", "start_time", "end_time")
    .orderBy(["weekday", "id"]);
  const closures = await k("site_closures")
    .where({ site_id: siteId })
    .select("id", "starts_on", "ends_on", "reason", "source")
    .orderBy(["starts_on", "id"]);
  return {
    site: { id: site.id, name: site.name, code: site.code, timeZone: site.time_zone },
    hours: hours.map((h): WorkingDay => ({ weekday: h.weekday, start: h.start_time, end: h.end_time })),
    closures: closures.map(
      (c): ClosureRow => ({ id: c.id, startsOn: c.starts_on, endsOn: c.ends_on, reason: c.reason, source: c.source }),
    ),
  };
}

/** Replaces the site's working hours (one span per weekday; a weekday left out is not worked). */
export async function setWorkingHours(siteId: number, days: WorkingDay[]): Promise<void> {
  await db().transaction(async (trx) => {
    await siteOrThrow(trx, siteId);
    await trx("site_working_hours").where({ site_id: siteId }).del();
    if (days.length)
      await trx("site_working_hours").insert(
        days.map((d) => ({ site_id: siteId, weekday: d.weekday, start_time: d.start, end_time: d.end })),
      );
  });
}

/** Takes the working hours away: the site then works Monday to Friday inside the trainers' own hours. */
export async function clearWorkingHours(siteId: number): Promise<void> {
  await siteOrThrow(db(), siteId);
  await db()("site_working_hours").where({ site_id: siteId }).del();
}

async function insertClosures(
  k: Db,
  p: Principal,
  siteId: number,
  closures: ImportedClosure[],
  source: "form" | "ics",
): Promise<{ added: number; known: number }> {
  const onFile = new Set(
    (await k("site_closures").where({ site_id: siteId }).select("starts_on", "ends_on")).map(
      (c) => `${c.starts_on}|${c.ends_on}`,
    ),
  );
  const fresh: ImportedClosure[] = [];
  for (const c of closures) {
    const key = `${c.startsOn}|${c.endsOn}`;
    if (onFile.has(key)) continue;
    onFile.add(key);
    fresh.push(c);
  }
  const now = nowInstant();
  const by = p.kind === "user" ? p.user.id : null;
  for (let i = 0; i < fresh.length; i += 200)
    await k("site_closures").insert(
      fresh.slice(i, i + 200).map((c) => ({
        site_id: siteId,
        starts_on: c.startsOn,
        ends_on: c.endsOn,
        reason: c.reason,
        source,
        created_by: by,
        created_at: now,
      })),
    );
  return { added: fresh.length, known: closures.length - fresh.length };
}

export async function addClosure(p: Principal, siteId: number, c: ImportedClosure): Promise<boolean> {
  return db().transaction(async (trx) => {
    await siteOrThrow(trx, siteId);
    return (await insertClosures(trx, p, siteId, [c], "form")).added === 1;
  });
}

export async function removeClosure(siteId: number, closureId: number): Promise<void> {
  const n = await db()("site_closures").where({ id: closureId, site_id: siteId }).del();
  if (!n) throw notFound("No such closure at this site.");
}

/**
 * Imports the closures of an .ics file into the site in one transaction: a file that cannot be read is refused
 * before anything is written; closures already on file (same first and last day) are not added twice.
 * Recurring events are expanded from `window.from` to `window.to`.
 */
export async function importClosures(
  p: Principal,
  siteId: number,
  text: string,
  window: { from: string; to: string },
): Promise<{ added: number; known: number; skippedTimed: number }> {
  const { closures, skippedTimed } = readClosuresIcs(text, window);
  return db().transaction(async (trx) => {
    await siteOrThrow(trx, siteId);
    return { ...(await insertClosures(trx, p, siteId, closures, "ics")), skippedTimed };
  });
}

/** The calendars of the given sites over a horizon, as the allocator reads them (closures touching it). */
export async function siteCalendars(
  siteIds: number[],
  from: string,
  to: string,
  k: Db = db(),
): Promise<SiteCalendar[]> {
  const ids = siteIds.length ? siteIds : [-1];
  const sites = await k("sites").whereIn("id", ids).select("id", "name").orderBy("id");
  const hours = await k("site_working_hours")
    .whereIn("site_id", ids)
    .select("site_id", "weekday", "start_time", "end_time")
    .orderBy(["site_id", "weekday", "id"]);
  const closures = await k("site_closures")
    .whereIn("site_id", ids)
    .where("starts_on", "<=", to)
    .where("ends_on", ">=", from)
    .select("site_id", "starts_on", "ends_on", "reason")
    .orderBy(["site_id", "starts_on", "id"]);
  return sites.map((s) => {
    const mine = hours.filter((h) => h.site_id === s.id);
    return {
      site: s.name,
      hours: mine.length ? mine.map((h) => ({ weekday: h.weekday, start: h.start_time, end: h.end_time })) : null,
      closures: closures
        .filter((c) => c.site_id === s.id)
        .map((c) => ({ startsOn: c.starts_on, endsOn: c.ends_on, reason: c.reason })),
    };
  });
}

/**
 * The session rules as they stand now for a run's calendar: its sites' working hours and closures, its device
 * types' shortest and longest sessions and wear-time limits, its trainers' break rules. Publishing checks the
 * packed sessions against these, so a change made after the run cannot slip through.
 */
export async function sessionRulesNow(calendar: PlanCalendar, k: Db = db()): Promise<RuleCalendar> {
  const siteIds = [...new Set(calendar.devices.map((d) => d.siteId))];
  const to = addDays(calendar.startDate, calendar.weeks * 7 - 1);
  const types = new Map(
    (
      await k("device_types")
        .whereIn("id", [...new Set(calendar.devices.map((d) => d.deviceTypeId))].concat(-1))
        .select("id", "wear_time_limit_minutes", "min_session_minutes", "max_session_minutes")
    ).map((t) => [t.id, t]),
  );
  const trainers = new Map(
    (
      await k("trainers")
        .whereIn("id", calendar.trainers.map((t) => t.trainerId).concat(-1))
        .select("id", "max_continuous_minutes", "break_minutes")
    ).map((t) => [t.id, t]),
  );
  return {
    sites: await siteCalendars(siteIds, calendar.startDate, to, k),
    devices: calendar.devices.map((d) => {
      const t = types.get(d.deviceTypeId);
      return {
        id: d.id,
        site: d.site,
        wearTimeLimitMinutes: t ? Number(t.wear_time_limit_minutes) : d.wearTimeLimitMinutes,
        minSessionMinutes: t ? Number(t.min_session_minutes) : d.minSessionMinutes,
        maxSessionMinutes: t ? Number(t.max_session_minutes) : d.maxSessionMinutes,
      };
    }),
    trainers: calendar.trainers.map((t) => {
      const now = trainers.get(t.trainerId);
      return now
        ? { id: t.id, maxContinuousMinutes: now.max_continuous_minutes, breakMinutes: now.break_minutes }
        : { id: t.id, maxContinuousMinutes: t.maxContinuousMinutes, breakMinutes: t.breakMinutes };
    }),
    workers: calendar.workers,
  };
}
