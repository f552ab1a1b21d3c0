import ICAL from "ical.js";
import { addDays } from "~/dates/calendar";
import { UserError } from "~/errors";

// Reading a site's closures from an .ics file (RFC 5545) with ical.js: every all-day event is a closure of the
// days it covers (DTEND is exclusive; without one, its DURATION or the one day); a recurring event (RRULE,
// RDATE, less EXDATE) gives one closure per occurrence inside the window asked for. Events with a time of day
// are skipped and counted: a closure is whole days. A file that cannot be read, or holds no all-day event,
// is refused with the problem named.

export const MAX_IMPORTED_CLOSURES = 500;

export interface ImportedClosure {
  startsOn: string;
  endsOn: string;
  reason: string;
}

const refuse = (message: string) => new UserError(`Calendar file: ${message}`, { status: 400, field: "ics" });

export function readClosuresIcs(
  text: string,
  window: { from: string; to: string },
): { closures: ImportedClosure[]; skippedTimed: number } {
  let root: ICAL.Component;
  try {
    root = new ICAL.Component(ICAL.parse(text));
  } catch (e) {
    throw refuse(`not a readable iCalendar file (${e instanceof Error ? e.message : String(e)}).`);
  }
  if (root.name !== "vcalendar") throw refuse("it does not start with BEGIN:VCALENDAR.");
  const events = root.getAllSubcomponents("vevent");
  if (events.length === 0) throw refuse("it holds no events (VEVENT).");
  const closures: ImportedClosure[] = [];
  let skippedTimed = 0;
  events.forEach((component, index) => {
    let event: ICAL.Event;
    let name = `event ${index + 1}`;
    try {
      event = new ICAL.Event(component);
      if (event.summary) name = `event ${index + 1} (“${String(event.summary).slice(0, 60)}”)`;
      if (!event.startDate) throw new Error("it has no DTSTART");
      if (!event.startDate.isDate) {
        skippedTimed++;
        return;
      }
      const reason = (String(event.summary ?? "").trim() || "Closed").slice(0, 300);
      const closureFrom = (start: ICAL.Time, end: ICAL.Time | null): ImportedClosure => {
        const startsOn = start.toString().slice(0, 10);
        const endDay = end?.toString().slice(0, 10);
        return { startsOn, endsOn: endDay && endDay > startsOn ? addDays(endDay, -1) : startsOn, reason };
      };
      if (!event.isRecurring()) closures.push(closureFrom(event.startDate, event.endDate ?? null));
      else {
        const it = event.iterator();
        for (let next = it.next(); next; next = it.next()) {
          const day = next.toString().slice(0, 10);
          if (day > window.to) break;
          if (closures.length > MAX_IMPORTED_CLOSURES) break;
          const details = event.getOccurrenceDetails(next);
          const c = closureFrom(details.startDate, details.endDate);
          if (c.endsOn >= window.from) closures.push(c);
        }
      }
    } catch (e) {
      if (e instanceof UserError) throw e;
      throw refuse(`${name} cannot be read (${e instanceof Error ? e.message : String(e)}).`);
    }
  });
  if (closures.length > MAX_IMPORTED_CLOSURES)
    throw refuse(`it gives more than ${MAX_IMPORTED_CLOSURES} closures; import a shorter calendar.`);
  if (closures.length === 0)
    throw refuse(
      skippedTimed
        ? `its ${skippedTimed} event${skippedTimed === 1 ? " has" : "s have"} a time of day; a closure is whole days (all-day events such as public holidays or a shutdown week).`
        : `none of its events falls between ${window.from} and ${window.to}.`,
    );
  return { closures, skippedTimed };
}
