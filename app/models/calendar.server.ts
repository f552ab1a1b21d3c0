import { createEvents, type EventAttributes } from "ics";
import { vtimezoneLines } from "~/dates";

// Calendar files (.ics) for published training sessions. Times are the site's wall-clock times,
// written with the site's zone (DTSTART;TZID=Europe/Berlin:20261207T090000) so a calendar in another zone
// shows the right moment; a UTC site gets plain UTC times. A UID is made from what the session is (person,
// day, time, device), so an unchanged session keeps its UID across republishing.
// The ics package writes neither TZID parameters nor VTIMEZONE blocks: it writes each time as UTC digits (from
// the wall-clock fields, never through the server's zone); the TZID and one VTIMEZONE per zone (offsets from
// the IANA tz database over the span of the file's events, app/dates/ical.ts) are put in afterwards.

export interface CalendarSession {
  uid: string;
  date: string; // YYYY-MM-DD
  start: string; // HH:MM
  end: string; // HH:MM
  timeZone: string; // IANA zone of the site
  title: string;
  description: string;
  location: string;
}

function parts(date: string, hhmm: string): [number, number, number, number, number] {
  const [y, m, d] = date.split("-").map(Number);
  const [h, min] = hhmm.split(":").map(Number);
  return [y, m, d, h, min];
}

/** An .ics calendar with one event per session; `cancel` marks every event cancelled (METHOD:CANCEL). */
export function icsFile(sessions: CalendarSession[], options: { calName: string; cancel?: boolean }): string {
  const events: EventAttributes[] = sessions.map((s) => ({
    uid: s.uid,
    start: parts(s.date, s.start),
    startInputType: "utc",
    startOutputType: "utc",
    end: parts(s.date, s.end),
    endInputType: "utc",
    endOutputType: "utc",
    title: s.title,
    description: s.description,
    location: s.location,
    status: options.cancel ? "CANCELLED" : "CONFIRMED",
    busyStatus: "BUSY",
    productId: "limberly/allocation",
    sequence: options.cancel ? 1 : 0,
  }));
  const { error, value } = createEvents(events, {
    productId: "limberly/allocation",
    method: options.cancel ? "CANCEL" : "PUBLISH",
    calName: options.calName,
  });
  if (error || !value) throw new Error(`Could not write the calendar file: ${error?.message ?? "no output"}`);
  return withZones(value, sessions);
}

/**
 * Turns each event's UTC-digit DTSTART/DTEND into its site's wall-clock time with TZID (UTC sites keep Z), and
 * adds a VTIMEZONE for each zone named.
 */
function withZones(ics: string, sessions: CalendarSession[]): string {
  const [head, ...events] = ics.split("BEGIN:VEVENT");
  if (events.length !== sessions.length) throw new Error("Could not write the calendar file: event count differs.");
  const spans = new Map<string, { from: string; to: string }>();
  for (const s of sessions) {
    if (s.timeZone === "UTC") continue;
    const span = spans.get(s.timeZone);
    if (!span) spans.set(s.timeZone, { from: s.date, to: s.date });
    else {
      if (s.date < span.from) span.from = s.date;
      if (s.date > span.to) span.to = s.date;
    }
  }
  const zones = [...spans]
    .sort(([a], [b]) => a.localeCompare(b))
    .flatMap(([zone, span]) => vtimezoneLines(zone, span.from, span.to))
    .map((line) => `${line}\r\n`)
    .join("");
  return [
    `${head}${zones}`,
    ...events.map((e, i) => {
      const zone = sessions[i].timeZone;
      if (zone === "UTC") return e;
      return e.replace(
        /^(DTSTART|DTEND):(\d{8}T\d{6})Z\r?$/gm,
        (_m, prop, digits) => `${prop};TZID=${zone}:${digits}\r`,
      );
    }),
  ].join("BEGIN:VEVENT");
}
