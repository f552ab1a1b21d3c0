import { describe, expect, it } from "vitest";
import { readClosuresIcs } from "~/models/closures-ics.server";
import { RFC5545_EXAMPLES } from "../reference/rfc5545-examples";

// Reading closures from .ics text with ical.js. The events are the examples of RFC 5545 section 3.6.1 (the
// VEVENT component), copied as printed there, inside a VCALENDAR as in the RFC's section 4 example.
const WINDOW = { from: "2026-12-03", to: "2029-12-02" };

describe("closures from an .ics file", () => {
  it("reads the RFC 5545 examples: an all-day span, a yearly all-day event expanded, a timed event skipped", () => {
    const r = readClosuresIcs(RFC5545_EXAMPLES, WINDOW);
    // by hand from the RFC text: DTSTART;VALUE=DATE:20070628 and DTEND;VALUE=DATE:20070709 (exclusive) is
    // 28 June to 8 July 2007; the yearly anniversary on 2 November falls in the window in 2027, 2028 and 2029;
    // the employee review has a time of day (DTSTART:19970903T163000Z)
    expect(r.closures).toEqual([
      { startsOn: "2027-11-02", endsOn: "2027-11-02", reason: "Our Blissful Anniversary" },
      { startsOn: "2028-11-02", endsOn: "2028-11-02", reason: "Our Blissful Anniversary" },
      { startsOn: "2029-11-02", endsOn: "2029-11-02", reason: "Our Blissful Anniversary" },
      { startsOn: "2007-06-28", endsOn: "2007-07-08", reason: "Festival International de Jazz de Montreal" },
    ]);
    expect(r.skippedTimed).toBe(1);
  });

  it("honours EXDATE on a yearly holiday", () => {
    const text = [
      "BEGIN:VCALENDAR",
      "VERSION:2.0",
      "PRODID:-//Limberly tests//EN",
      "BEGIN:VEVENT",
      "UID:christmas@example.com",
      "DTSTAMP:20260101T000000Z",
      "DTSTART;VALUE=DATE:20261225",
      "DTEND;VALUE=DATE:20261227",
      "RRULE:FREQ=YEARLY",
      "EXDATE;VALUE=DATE:20271225",
      "SUMMARY:Christmas shutdown",
      "END:VEVENT",
      "END:VCALENDAR",
      "",
    ].join("\r\n");
    expect(readClosuresIcs(text, WINDOW).closures).toEqual([
      { startsOn: "2026-12-25", endsOn: "2026-12-26", reason: "Christmas shutdown" },
      { startsOn: "2028-12-25", endsOn: "2028-12-26", reason: "Christmas shutdown" },
    ]);
  });

  it("refuses what it cannot use, naming the problem", () => {
    const refused = (text: string) => {
      try {
        readClosuresIcs(text, WINDOW);
      } catch (e) {
        return (e as Error).message;
      }
      return "accepted";
    };
    expect(refused("employee_number,given_name\n1,Ann\n")).toMatch(/^Calendar file: not a readable iCalendar file/);
    expect(refused("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nEND:VCALENDAR\r\n")).toBe(
      "Calendar file: it holds no events (VEVENT).",
    );
    expect(
      refused(
        "BEGIN:VCALENDAR\r\nBEGIN:VEVENT\r\nUID:a\r\nDTSTART:20270105T090000Z\r\nDTEND:20270105T100000Z\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n",
      ),
    ).toMatch(/has a time of day; a closure is whole days/);
    expect(
      refused(
        "BEGIN:VCALENDAR\r\nBEGIN:VEVENT\r\nUID:a\r\nDTSTART;VALUE=DATE:2027XX05\r\nSUMMARY:Bad day\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n",
      ),
    ).toMatch(/^Calendar file: event 1 .*Bad day.* cannot be read/);
  });
});
