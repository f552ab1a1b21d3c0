import type { Instant, IsoDate, WallClock } from "./calendar";

// Display formats (British English, 24-hour clock). Wall-clock times and days are shown as written, whatever
// the server's or the browser's zone (formatted as UTC fields, so server and browser render the same text);
// instants are shown in a named zone with the zone's short name ("14:51 CET", "09:00 GMT").

const DAY = new Intl.DateTimeFormat("en-GB", {
  weekday: "short",
  day: "numeric",
  month: "short",
  year: "numeric",
  timeZone: "UTC",
});
const TIME = new Intl.DateTimeFormat("en-GB", { hour: "2-digit", minute: "2-digit", hour12: false, timeZone: "UTC" });
const asUtc = (s: string) => new Date(`${s.length === 10 ? `${s}T00:00:00` : s.slice(0, 19)}Z`);

/** "Mon, 7 Dec 2026" for a day or the day of a wall-clock time. */
export const formatDay = (dateOrWall: IsoDate | WallClock) => DAY.format(asUtc(dateOrWall));
/** "09:00" for a wall-clock time. */
export const formatTime = (wall: WallClock) => TIME.format(asUtc(wall));
/** "09:00–10:00" (or "09:00" without an end). */
export const formatSpan = (start: WallClock, end: WallClock | null) =>
  `${formatTime(start)}${end ? `–${formatTime(end)}` : ""}`;
/** "2026-12-07T09:00" for a datetime-local control. */
export const toLocalInput = (wall: WallClock) => wall.slice(0, 16);

const instantFormats = new Map<string, { full: Intl.DateTimeFormat; day: Intl.DateTimeFormat }>();
function instantFormat(zone: string) {
  let f = instantFormats.get(zone);
  if (!f) {
    f = {
      full: new Intl.DateTimeFormat("en-GB", {
        day: "numeric",
        month: "short",
        year: "numeric",
        hour: "2-digit",
        minute: "2-digit",
        hour12: false,
        timeZone: zone,
        timeZoneName: "short",
      }),
      day: new Intl.DateTimeFormat("en-GB", {
        weekday: "short",
        day: "numeric",
        month: "short",
        year: "numeric",
        timeZone: zone,
      }),
    };
    instantFormats.set(zone, f);
  }
  return f;
}

/** "3 Dec 2026, 14:51 CET": an instant in the viewer's zone, with the zone named. */
export function formatInstant(instant: Instant | Date, zone: string): string {
  return instantFormat(zone).full.format(typeof instant === "string" ? new Date(instant) : instant);
}
/** "Thu, 3 Dec 2026": the day an instant falls on in a zone. */
export function formatInstantDay(instant: Instant | Date, zone: string): string {
  return instantFormat(zone).day.format(typeof instant === "string" ? new Date(instant) : instant);
}
