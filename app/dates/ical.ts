import { Temporal } from "temporal-polyfill";
import type { IsoDate } from "./calendar";

// iCalendar (RFC 5545 §3.6.5) VTIMEZONE blocks from the runtime's copy of the IANA tz database, so an .ics
// file that names TZID=Europe/Berlin also says what that zone's offsets are. Pure: no clock.

const compactOffset = (o: string) => o.replace(/:/g, "");
const compactWallClock = (z: Temporal.ZonedDateTime) =>
  z.toPlainDateTime().toString({ smallestUnit: "second" }).replace(/[-:]/g, "");

/**
 * The lines of a VTIMEZONE for `zone` covering the days `from` to `to`: one observance for the offset in
 * force at the start, then one per change of offset (to a larger offset DAYLIGHT, to a smaller STANDARD),
 * each starting at the wall-clock time just before the change, as RFC 5545 writes it.
 */
export function vtimezoneLines(zone: string, from: IsoDate, to: IsoDate): string[] {
  const start = Temporal.PlainDate.from(from).toZonedDateTime({ timeZone: zone });
  const end = Temporal.PlainDate.from(to).add({ days: 1 }).toZonedDateTime({ timeZone: zone });
  const changes: { at: Temporal.ZonedDateTime; before: string; after: string }[] = [];
  let before = start.offset;
  for (let t = start.getTimeZoneTransition("next"); t && Temporal.ZonedDateTime.compare(t, end) < 0; ) {
    changes.push({ at: t, before, after: t.offset });
    before = t.offset;
    t = t.getTimeZoneTransition("next");
  }
  const grows = (a: string, b: string) => offsetSeconds(b) > offsetSeconds(a);
  const observance = (kind: "STANDARD" | "DAYLIGHT", dtstart: string, fromOffset: string, toOffset: string) => [
    `BEGIN:${kind}`,
    `DTSTART:${dtstart}`,
    `TZOFFSETFROM:${compactOffset(fromOffset)}`,
    `TZOFFSETTO:${compactOffset(toOffset)}`,
    `END:${kind}`,
  ];
  const firstKind = changes.length && !grows(changes[0].before, changes[0].after) ? "DAYLIGHT" : "STANDARD";
  return [
    "BEGIN:VTIMEZONE",
    `TZID:${zone}`,
    ...observance(firstKind, compactWallClock(start), start.offset, start.offset),
    ...changes.flatMap((c) =>
      observance(
        grows(c.before, c.after) ? "DAYLIGHT" : "STANDARD",
        // The wall-clock time just before the change, on the old offset (02:00 for Berlin in March).
        compactWallClock(c.at.toInstant().toZonedDateTimeISO(c.before)),
        c.before,
        c.after,
      ),
    ),
    "END:VTIMEZONE",
  ];
}

function offsetSeconds(offset: string): number {
  const m = /^([+-])(\d\d):(\d\d)(?::(\d\d))?/.exec(offset);
  if (!m) throw new RangeError(`Not an offset: ${offset}`);
  return (m[1] === "-" ? -1 : 1) * (Number(m[2]) * 3600 + Number(m[3]) * 60 + Number(m[4] ?? 0));
}
