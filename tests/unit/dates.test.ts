import { describe, expect, it } from "vitest";
import {
  addDays,
  addMinutesToWallClock,
  addWeeks,
  dateIn,
  dayAndWeekIn,
  daysBetween,
  formatDay,
  formatInstant,
  formatSpan,
  formatTime,
  hoursBetween,
  instantToWallClock,
  isIsoDate,
  isoWeekday,
  isTimeZone,
  todayIn,
  vtimezoneLines,
  wallClock,
  wallClockExists,
  wallClockToInstant,
  weekEnd,
  weekStart,
} from "~/dates";
import { icsFile } from "~/models/calendar.server";

describe("calendar days", () => {
  it("adds days and weeks across month, leap-day and year ends", () => {
    // Gregorian calendar (common practice): 2028 is a leap year, 2026 is not.
    expect(addDays("2026-02-28", 1)).toBe("2026-03-01");
    expect(addDays("2028-02-28", 1)).toBe("2028-02-29");
    expect(addDays("2026-12-31", 1)).toBe("2027-01-01");
    expect(addDays("2027-01-01", -1)).toBe("2026-12-31");
    expect(addWeeks("2026-12-28", 1)).toBe("2027-01-04");
    expect(daysBetween("2026-12-07", "2027-01-04")).toBe(28);
  });

  it("a week spanning the year boundary runs Monday 28 Dec 2026 to Sunday 3 Jan 2027", () => {
    // ISO 8601 weeks (common practice): 1 Jan 2027 is a Friday, in the week that starts Monday 28 Dec 2026.
    expect(isoWeekday("2027-01-01")).toBe(5);
    expect(weekStart("2027-01-01")).toBe("2026-12-28");
    expect(weekEnd("2027-01-01")).toBe("2027-01-03");
    expect(weekStart("2026-12-28")).toBe("2026-12-28");
    expect(weekStart("2027-01-03")).toBe("2026-12-28");
    expect(weekStart("2027-01-04")).toBe("2027-01-04");
  });

  it("accepts only real days written YYYY-MM-DD", () => {
    expect(isIsoDate("2026-12-07")).toBe(true);
    expect(isIsoDate("2026-02-30")).toBe(false);
    expect(isIsoDate("2026-12-7")).toBe(false);
    expect(isIsoDate("Mon Dec 07 2026")).toBe(false);
  });
});

describe("time zones", () => {
  it("knows IANA names and refuses others", () => {
    // IANA tz database zone names.
    expect(isTimeZone("Europe/Berlin")).toBe(true);
    expect(isTimeZone("Europe/London")).toBe(true);
    expect(isTimeZone("UTC")).toBe(true);
    expect(isTimeZone("Europe/Atlantis")).toBe(false);
    expect(isTimeZone("CET+1")).toBe(false);
  });

  it("2026-03-29 in Europe/Berlin has 23 hours and no 02:30", () => {
    // IANA tz database (Europe/Berlin follows EU rules): clocks go from 02:00 CET to 03:00 CEST on the last
    // Sunday of March, 29 March 2026 at 01:00 UTC.
    expect(hoursBetween("2026-03-29T00:00:00", "2026-03-30T00:00:00", "Europe/Berlin")).toBe(23);
    expect(wallClockExists("2026-03-29T02:30:00", "Europe/Berlin")).toBe(false);
    expect(wallClockExists("2026-03-29T03:30:00", "Europe/Berlin")).toBe(true);
    expect(() => wallClockToInstant("2026-03-29T02:30:00", "Europe/Berlin", "reject")).toThrow();
    // RFC 5545 §3.3.5 (and Temporal's "compatible"): a time in the gap is read with the offset before the gap.
    expect(wallClockToInstant("2026-03-29T02:30:00", "Europe/Berlin")).toBe("2026-03-29T01:30:00.000Z");
    expect(wallClockToInstant("2026-03-29T01:59:00", "Europe/Berlin")).toBe("2026-03-29T00:59:00.000Z");
    expect(wallClockToInstant("2026-03-29T03:00:00", "Europe/Berlin")).toBe("2026-03-29T01:00:00.000Z");
  });

  it("2026-10-25 in Europe/Berlin has 25 hours and 02:30 twice", () => {
    // IANA tz database: clocks go back from 03:00 CEST to 02:00 CET on the last Sunday of October, at 01:00 UTC.
    expect(hoursBetween("2026-10-25T00:00:00", "2026-10-26T00:00:00", "Europe/Berlin")).toBe(25);
    // RFC 5545 §3.3.5: a repeated time means its first occurrence (CEST, UTC+2).
    expect(wallClockToInstant("2026-10-25T02:30:00", "Europe/Berlin")).toBe("2026-10-25T00:30:00.000Z");
    expect(instantToWallClock("2026-10-25T00:30:00Z", "Europe/Berlin")).toBe("2026-10-25T02:30:00");
    expect(instantToWallClock("2026-10-25T01:30:00Z", "Europe/Berlin")).toBe("2026-10-25T02:30:00");
    // An ordinary day has 24.
    expect(hoursBetween("2026-12-07T00:00:00", "2026-12-08T00:00:00", "Europe/Berlin")).toBe(24);
  });

  it("wall clock and instant convert both ways in winter and summer", () => {
    // IANA tz database: Europe/Berlin is UTC+1 in winter, UTC+2 in summer; Europe/London UTC+0 / UTC+1.
    expect(wallClockToInstant("2026-12-07T09:00:00", "Europe/Berlin")).toBe("2026-12-07T08:00:00.000Z");
    expect(wallClockToInstant("2026-07-06T09:00:00", "Europe/Berlin")).toBe("2026-07-06T07:00:00.000Z");
    expect(wallClockToInstant("2026-07-06T09:00:00", "Europe/London")).toBe("2026-07-06T08:00:00.000Z");
    expect(instantToWallClock("2026-12-07T08:00:00.000Z", "Europe/Berlin")).toBe("2026-12-07T09:00:00");
    expect(instantToWallClock(new Date("2026-07-06T08:00:00Z"), "UTC")).toBe("2026-07-06T08:00:00");
  });

  it("today follows the zone near midnight UTC", () => {
    // 23:30 UTC on Sunday 6 Dec 2026 is 00:30 on Monday 7 Dec in Berlin (UTC+1), still Sunday in London (UTC+0).
    const at = "2026-12-06T23:30:00.000Z";
    expect(todayIn("Europe/Berlin", at)).toBe("2026-12-07");
    expect(todayIn("Europe/London", at)).toBe("2026-12-06");
    expect(dateIn(at, "America/New_York")).toBe("2026-12-06");
    const berlin = dayAndWeekIn("Europe/Berlin", at);
    expect(berlin).toEqual({
      date: "2026-12-07",
      dayStart: "2026-12-07T00:00:00",
      dayEnd: "2026-12-08T00:00:00",
      weekStart: "2026-12-07T00:00:00",
      weekEnd: "2026-12-14T00:00:00",
    });
    expect(dayAndWeekIn("UTC", at).weekStart).toBe("2026-11-30T00:00:00");
  });
});

describe("stored wall-clock times", () => {
  it("reads zone-less, Z-suffixed, space-separated and Date values as the same wall-clock time", () => {
    expect(wallClock("2026-12-07T09:00:00")).toBe("2026-12-07T09:00:00");
    expect(wallClock("2026-12-07T09:00")).toBe("2026-12-07T09:00:00");
    expect(wallClock("2026-12-07T09:00:00.000Z")).toBe("2026-12-07T09:00:00");
    expect(wallClock("2026-12-07 09:00:00")).toBe("2026-12-07T09:00:00");
    expect(wallClock(new Date("2026-12-07T09:00:00Z"))).toBe("2026-12-07T09:00:00");
    expect(() => wallClock("Mon Dec 07")).toThrow();
  });

  it("adds minutes on the wall clock, also across a DST change", () => {
    expect(addMinutesToWallClock("2026-12-07T09:00:00", 60)).toBe("2026-12-07T10:00:00");
    expect(addMinutesToWallClock("2026-03-29T01:30:00", 60)).toBe("2026-03-29T02:30:00");
    expect(addMinutesToWallClock("2026-12-31T23:30:00", 45)).toBe("2027-01-01T00:15:00");
  });
});

describe("display", () => {
  it("formats wall-clock times as written and instants in a named zone", () => {
    expect(formatDay("2026-12-07")).toBe("Mon, 7 Dec 2026");
    expect(formatDay("2026-12-07T23:30:00")).toBe("Mon, 7 Dec 2026");
    expect(formatTime("2026-12-07T09:00:00")).toBe("09:00");
    expect(formatSpan("2026-12-07T09:00:00", "2026-12-07T10:15:00")).toBe("09:00–10:15");
    // Short zone names from CLDR (en-GB): CET/CEST for Berlin, GMT/BST for London.
    expect(formatInstant("2026-12-07T08:00:00Z", "Europe/Berlin")).toBe("7 Dec 2026, 09:00 CET");
    expect(formatInstant("2026-07-06T07:00:00Z", "Europe/Berlin")).toBe("6 Jul 2026, 09:00 CEST");
    expect(formatInstant("2026-07-06T08:00:00Z", "Europe/London")).toBe("6 Jul 2026, 09:00 BST");
    expect(formatInstant("2026-12-07T08:00:00Z", "UTC")).toBe("7 Dec 2026, 08:00 UTC");
  });
});

describe("calendar files", () => {
  it("a VTIMEZONE for Europe/Berlin in 2026 has the March and October changes", () => {
    // RFC 5545 §3.6.5: each observance starts at the local time before the change; dates from the IANA tz
    // database (01:00 UTC on the last Sundays of March and October).
    expect(vtimezoneLines("Europe/Berlin", "2026-03-01", "2026-12-31")).toEqual([
      "BEGIN:VTIMEZONE",
      "TZID:Europe/Berlin",
      "BEGIN:STANDARD",
      "DTSTART:20260301T000000",
      "TZOFFSETFROM:+0100",
      "TZOFFSETTO:+0100",
      "END:STANDARD",
      "BEGIN:DAYLIGHT",
      "DTSTART:20260329T020000",
      "TZOFFSETFROM:+0100",
      "TZOFFSETTO:+0200",
      "END:DAYLIGHT",
      "BEGIN:STANDARD",
      "DTSTART:20261025T030000",
      "TZOFFSETFROM:+0200",
      "TZOFFSETTO:+0100",
      "END:STANDARD",
      "END:VTIMEZONE",
    ]);
    // A zone without summer time (IANA: Asia/Kolkata is UTC+05:30 all year) has one observance.
    expect(vtimezoneLines("Asia/Kolkata", "2026-01-01", "2026-12-31")).toEqual([
      "BEGIN:VTIMEZONE",
      "TZID:Asia/Kolkata",
      "BEGIN:STANDARD",
      "DTSTART:20260101T000000",
      "TZOFFSETFROM:+0530",
      "TZOFFSETTO:+0530",
      "END:STANDARD",
      "END:VTIMEZONE",
    ]);
  });

  it("events carry the site's zone as TZID with a VTIMEZONE; UTC sites keep UTC times", () => {
    const base = { title: "Device training", description: "", location: "North Yard" };
    const ics = icsFile(
      [
        { ...base, uid: "a@limberly", date: "2026-12-07", start: "09:00", end: "10:00", timeZone: "Europe/Berlin" },
        { ...base, uid: "b@limberly", date: "2026-12-08", start: "09:00", end: "09:45", timeZone: "UTC" },
      ],
      { calName: "Test" },
    );
    expect(ics).toContain("DTSTART;TZID=Europe/Berlin:20261207T090000\r\n");
    expect(ics).toContain("DTEND;TZID=Europe/Berlin:20261207T100000\r\n");
    expect(ics).toContain("DTSTART:20261208T090000Z\r\n");
    expect(ics).toContain("DTEND:20261208T094500Z\r\n");
    expect(ics.indexOf("BEGIN:VTIMEZONE\r\nTZID:Europe/Berlin\r\n")).toBeGreaterThan(0);
    expect(ics.indexOf("END:VTIMEZONE")).toBeLessThan(ics.indexOf("BEGIN:VEVENT"));
    expect(ics).not.toContain("TZID:UTC");
  });
});
