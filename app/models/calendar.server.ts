import { createEvents, type EventAttributes } from "ics";

// Calendar files (.ics) for published training sessions. Times are the site's local wall-clock
// times, written as floating local times so calendars show them as planned. A UID is made from what the
// session is (person, day, time, device), so an unchanged session keeps its UID across republishing.

export interface CalendarSession {
  uid: string;
  date: string; // YYYY-MM-DD
  start: string; // HH:MM
  end: string; // HH:MM
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
    startInputType: "local",
    startOutputType: "local",
    end: parts(s.date, s.end),
    endInputType: "local",
    endOutputType: "local",
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
  return value;
}
