import { Temporal } from "temporal-polyfill";

// Calendar dates, wall-clock times and instants, on the Temporal API (temporal-polyfill). Pure: no clock is
// read here, so app/compute may use it like a library. Three kinds of value travel through the app as strings:
//   IsoDate    "2026-12-07"            a calendar day (no zone)
//   WallClock  "2026-12-07T09:00:00"   a site's wall-clock time (no zone: read with the site's time zone)
//   Instant    "2026-12-07T08:00:00.000Z"  a moment (always UTC, ends in Z)

export type IsoDate = string;
export type WallClock = string;
export type Instant = string;

/** The organisation's default for new sites and the fallback where a zone is unknown. */
export const DEFAULT_TIME_ZONE = "UTC";

let zones: Set<string> | null = null;
/** IANA time-zone names this runtime knows (its ICU copy of the IANA tz database), plus "UTC". */
export function timeZoneNames(): string[] {
  if (!zones) zones = new Set(["UTC", ...Intl.supportedValuesOf("timeZone")]);
  return [...zones].sort();
}
export function isTimeZone(name: string): boolean {
  if (!zones) timeZoneNames();
  return zones!.has(name);
}

const DATE_RE = /^\d{4}-\d{2}-\d{2}$/;
/** A real calendar day written YYYY-MM-DD (2026-02-30 is not). */
export function isIsoDate(s: string): boolean {
  if (!DATE_RE.test(s)) return false;
  try {
    Temporal.PlainDate.from(s, { overflow: "reject" });
    return true;
  } catch {
    return false;
  }
}

// ── calendar days ──

export function addDays(date: IsoDate, n: number): IsoDate {
  return Temporal.PlainDate.from(date).add({ days: n }).toString();
}
export function addWeeks(date: IsoDate, n: number): IsoDate {
  return Temporal.PlainDate.from(date).add({ weeks: n }).toString();
}
/** Whole days from `from` to `to` (negative when `to` is earlier). */
export function daysBetween(from: IsoDate, to: IsoDate): number {
  return Temporal.PlainDate.from(from).until(Temporal.PlainDate.from(to), { largestUnit: "days" }).days;
}
/** ISO weekday: 1 = Monday … 7 = Sunday. */
export function isoWeekday(date: IsoDate): number {
  return Temporal.PlainDate.from(date).dayOfWeek;
}
/** Monday of the ISO week (Monday to Sunday) holding `date`. */
export function weekStart(date: IsoDate): IsoDate {
  const d = Temporal.PlainDate.from(date);
  return d.subtract({ days: d.dayOfWeek - 1 }).toString();
}
/** Sunday of the ISO week holding `date`. */
export function weekEnd(date: IsoDate): IsoDate {
  return addDays(weekStart(date), 6);
}

// ── wall-clock times and instants ──

/** The calendar day of an instant in a zone. */
export function dateIn(instant: Instant | Date, zone: string): IsoDate {
  return zoned(instant, zone).toPlainDate().toString();
}

/** The wall-clock time an instant shows in a zone. */
export function instantToWallClock(instant: Instant | Date, zone: string): WallClock {
  return zoned(instant, zone).toPlainDateTime().toString({ smallestUnit: "second" });
}

/**
 * The instant a wall-clock time in a zone stands for. Across a DST change some wall-clock times do not exist
 * (Europe/Berlin 2026-03-29 02:30) and some occur twice (2026-10-25 02:30): "compatible" (the default, as
 * RFC 5545 and most calendars do) takes the later reading of a gap and the earlier of a repeat; "reject" throws.
 */
export function wallClockToInstant(
  wall: WallClock,
  zone: string,
  disambiguation: "compatible" | "reject" = "compatible",
): Instant {
  return Temporal.PlainDateTime.from(wall)
    .toZonedDateTime(zone, { disambiguation })
    .toInstant()
    .toString({ smallestUnit: "millisecond" });
}

/** Whether this wall-clock time occurs in the zone (false inside a spring-forward gap). */
export function wallClockExists(wall: WallClock, zone: string): boolean {
  try {
    wallClockToInstant(wall, zone, "reject");
    return true;
  } catch {
    return false;
  }
}

/** Midnight at the start of a day, as a wall-clock time ("2026-12-07T00:00:00"). */
export function startOfDay(date: IsoDate): WallClock {
  return `${date}T00:00:00`;
}

/** A wall-clock time from a day and "HH:MM". */
export function wallClockAt(date: IsoDate, hhmm: string): WallClock {
  return `${date}T${hhmm.slice(0, 5)}:00`;
}

/** Hours between two wall-clock times in a zone (elapsed time: 23 for 00:00–24:00 on a spring-forward day). */
export function hoursBetween(from: WallClock, to: WallClock, zone: string): number {
  return (Date.parse(wallClockToInstant(to, zone)) - Date.parse(wallClockToInstant(from, zone))) / 3_600_000;
}

/** Adds minutes to a wall-clock time on the wall clock (09:00 + 60 = 10:00, whatever the zone). */
export function addMinutesToWallClock(wall: WallClock, minutes: number): WallClock {
  return Temporal.PlainDateTime.from(wall).add({ minutes }).toString({ smallestUnit: "second" });
}

/**
 * A stored session time as a WallClock. The column holds zone-less wall-clock times; rows written by older
 * code carry a "Z" or an offset, or come back from a driver as a Date of that text read as UTC: in every case
 * the digits are the site's wall-clock time, so the designator is dropped, never applied.
 */
export function wallClock(v: unknown): WallClock {
  if (v instanceof Date) return v.toISOString().slice(0, 19);
  const s = String(v).trim().replace(" ", "T");
  const m = /^(\d{4}-\d{2}-\d{2})T(\d{2}):(\d{2})(?::(\d{2}))?/.exec(s);
  if (!m) throw new RangeError(`Not a date and time: ${s}`);
  return `${m[1]}T${m[2]}:${m[3]}:${m[4] ?? "00"}`;
}

/** The day part of a wall-clock time. */
export const dayOf = (wall: WallClock): IsoDate => wall.slice(0, 10);
/** "HH:MM" of a wall-clock time. */
export const hhmmOfWallClock = (wall: WallClock): string => wall.slice(11, 16);

function zoned(instant: Instant | Date, zone: string) {
  const ms = instant instanceof Date ? instant.getTime() : Date.parse(instant);
  if (Number.isNaN(ms)) throw new RangeError(`Not an instant: ${String(instant)}`);
  return Temporal.Instant.fromEpochMilliseconds(ms).toZonedDateTimeISO(zone);
}

/**
 * "Today" and "this week" (Monday to Sunday) in a zone at an instant, as wall-clock bounds [start, end) to
 * compare stored wall-clock times with.
 */
export function dayAndWeekIn(zone: string, now: Instant | Date) {
  return dayAndWeekOf(dateIn(now, zone));
}

/** The same bounds for a given calendar day and its week (Monday to Sunday). */
export function dayAndWeekOf(date: IsoDate) {
  const monday = weekStart(date);
  return {
    date,
    dayStart: startOfDay(date),
    dayEnd: startOfDay(addDays(date, 1)),
    weekStart: startOfDay(monday),
    weekEnd: startOfDay(addDays(monday, 7)),
  };
}
