// Pure date helpers for allocation plans: weeks of a horizon, weekdays, date ranges.
// Dates are ISO "YYYY-MM-DD" strings in the site's calendar; the day arithmetic is the dates module's
// (app/dates/calendar.ts, pure); no clock is read here.
import { addDays } from "../dates/calendar";

export { addDays, isoWeekday } from "../dates/calendar";

export const WEEKDAY_NAMES = [
  "",
  "Monday",
  "Tuesday",
  "Wednesday",
  "Thursday",
  "Friday",
  "Saturday",
  "Sunday",
] as const;

/** The seven dates of week `week` (0-based) of a horizon starting on the Monday `start`. */
export function weekDates(start: string, week: number): string[] {
  return Array.from({ length: 7 }, (_, i) => addDays(start, week * 7 + i));
}

export function inRange(iso: string, from: string, to: string): boolean {
  return iso >= from && iso <= to;
}

export function minutesOf(hhmm: string): number {
  const [h, m] = hhmm.split(":").map(Number);
  return h * 60 + m;
}

export function hhmmOf(minutes: number): string {
  const h = Math.floor(minutes / 60);
  const m = minutes % 60;
  return `${String(h).padStart(2, "0")}:${String(m).padStart(2, "0")}`;
}
